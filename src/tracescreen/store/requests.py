"""Retest request lines kept in the workspace: what was asked of a laboratory and what came of it.

A line (:func:`tracescreen.retest.request.request_lines`) is stored when the reviewer sends it
(status ``requested``); its status then becomes ``confirmed`` (the retest confirmed the result) or
``not_confirmed`` (it did not). The next campaign's retest request shows the lines still
``requested``: the ones the laboratory or the field has not answered yet.
"""

from __future__ import annotations

import pandas as pd

from tracescreen.store.database import now, write

#: statuses of a request line, in order
REQUEST_STATUSES = ("requested", "confirmed", "not_confirmed")
STATUS_WORDS = {"requested": "requested, still open", "confirmed": "retest confirmed the result",
                "not_confirmed": "retest did not confirm the result"}
STORED_COLUMNS = ["request_id", "lab", "batch", "site_id", "sample_id", "sampled_at", "analytes", "action",
                  "reasons", "reason_codes", "status", "requested_at", "updated_at", "note"]


def read_requests(con) -> pd.DataFrame:
    """Every stored request line (:data:`STORED_COLUMNS`), oldest request first."""
    return pd.read_sql_query(f"SELECT {', '.join(STORED_COLUMNS)} FROM retest_requests ORDER BY requested_at, request_id",
                             con)


def _text(v) -> str:
    if v is None or (isinstance(v, float) and v != v) or v is pd.NaT:
        return ""
    return pd.Timestamp(v).isoformat() if isinstance(v, pd.Timestamp) else str(v)


def record_requests(con, lines: pd.DataFrame, status: str = "requested", note: str = "") -> int:
    """Store request lines with ``status`` (new lines are added, known ones get the status); returns the count."""
    if status not in REQUEST_STATUSES:
        raise ValueError(f"request status must be one of {', '.join(REQUEST_STATUSES)}, not {status!r}")
    stamp = now()
    rows = [(*(_text(r.get(c)) for c in STORED_COLUMNS[:10]), status, stamp, stamp, note)
            for r in lines.to_dict("records")]
    with write(con):
        con.executemany(
            f"INSERT INTO retest_requests ({', '.join(STORED_COLUMNS)}) VALUES ({', '.join('?' * len(STORED_COLUMNS))}) "
            "ON CONFLICT(request_id) DO UPDATE SET status = excluded.status, updated_at = excluded.updated_at, "
            "note = CASE WHEN excluded.note = '' THEN retest_requests.note ELSE excluded.note END", rows)
    return len(rows)


def set_request_status(con, request_ids, status: str, note: str = "") -> int:
    """Set the status of stored lines (by id); returns the number changed."""
    if status not in REQUEST_STATUSES:
        raise ValueError(f"request status must be one of {', '.join(REQUEST_STATUSES)}, not {status!r}")
    ids = [str(i) for i in request_ids]
    with write(con):
        cur = con.executemany("UPDATE retest_requests SET status = ?, updated_at = ?, note = CASE WHEN ? = '' "
                              "THEN note ELSE ? END WHERE request_id = ?",
                              [(status, now(), note, note, i) for i in ids])
    return cur.rowcount if cur.rowcount >= 0 else len(ids)
