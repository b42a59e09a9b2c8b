"""Data-quality logic: per-file counts, rejection reasons, rejected rows (plain functions)."""

from __future__ import annotations

import pandas as pd
from dash import html

from dashboard.data import SessionData

_FIRST = ["file", "sheet", "row", "reason"]


def rejected_frame(session: SessionData) -> pd.DataFrame:
    """Rejected rows: ``file, sheet, row, reason`` first, then the original cells."""
    rej = session.rejected
    if rej is None or rej.empty:
        return pd.DataFrame(columns=_FIRST)
    first = [c for c in _FIRST if c in rej.columns]
    return rej[first + [c for c in rej.columns if c not in first]]


def reason_counts(session: SessionData) -> pd.DataFrame:
    """Rejected rows per reason, most frequent first.

    A reason often quotes the offending value (``sampled_at '2019-02-30' is not a date``); with
    quoted values replaced by ``'…'`` the same problem groups together.
    """
    rej = rejected_frame(session)
    if rej.empty:
        return pd.DataFrame({"problem": [], "rows": []})
    kind = rej["reason"].astype(str).str.replace(r"'[^']*'", "'…'", regex=True).str.strip()
    out = kind.value_counts().rename_axis("problem").reset_index(name="rows")
    return out


def html_table(frame: pd.DataFrame, table_id: str) -> html.Table:
    head = html.Thead(html.Tr([html.Th(c) for c in frame.columns]))
    body = html.Tbody([html.Tr([html.Td(f"{v:,}" if isinstance(v, int) else str(v)) for v in row])
                       for row in frame.itertuples(index=False)])
    return html.Table([head, body], id=table_id, className="plain")


FILE_COLUMNS = ["file", "sheet", "rows_read", "accepted", "rejected", "blank_rows", "sha256"]


def file_table(session: SessionData) -> html.Table:
    files = session.files[[c for c in FILE_COLUMNS if c in session.files.columns]].copy()
    if "sha256" in files:
        files["sha256"] = files["sha256"].astype(str).str[:12] + "…"
    for c in files.columns:
        if pd.api.types.is_integer_dtype(files[c].dtype):
            files[c] = files[c].astype(object).map(int)
    return html_table(files, "dq-files-table")


def reason_table(session: SessionData):
    counts = reason_counts(session)
    if counts.empty:
        return html.P("No rejected rows.")
    counts["rows"] = counts["rows"].astype(object).map(int)
    return html_table(counts, "dq-reasons-table")
