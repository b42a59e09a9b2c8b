"""The status of retest request lines: in the workspace when the dashboard runs on one (so the next
campaign shows what is still open), else for as long as the dashboard runs."""

from __future__ import annotations

import threading
from pathlib import Path

import pandas as pd

from tracescreen.store.requests import STORED_COLUMNS


class RequestBook:
    """Request lines and their statuses (``workspace`` folder, or ``None`` for memory only)."""

    def __init__(self, workspace: Path | None = None):
        self.workspace = workspace
        self._memory = pd.DataFrame({c: pd.Series(dtype=object) for c in STORED_COLUMNS})
        self._lock = threading.Lock()
        self._changes = 0

    @property
    def kept(self) -> str:
        """Where the statuses are kept, in words."""
        return (f"in the workspace ({self.workspace})" if self.workspace is not None
                else "for as long as the dashboard runs (start it on a workspace to keep them)")

    def _with_workspace(self, fn):
        from tracescreen.store.workspace import open_workspace

        with open_workspace(self.workspace) as ws:
            return fn(ws.con)

    def version(self) -> tuple:
        """Changes whenever a status is recorded (here, or in the workspace by another process)."""
        if self.workspace is not None:
            return self._with_workspace(lambda con: tuple(con.execute(
                "SELECT count(*), coalesce(max(updated_at), '') FROM retest_requests").fetchone()))
        return (self._changes,)

    def lines(self) -> pd.DataFrame:
        """Every stored line with its status."""
        from tracescreen.store.requests import read_requests

        if self.workspace is not None:
            return self._with_workspace(read_requests)
        with self._lock:
            return self._memory.copy()

    def record(self, lines: pd.DataFrame, status: str = "requested") -> int:
        """Store lines with a status (a sent request: ``requested``)."""
        from tracescreen.store.requests import record_requests

        if self.workspace is not None:
            return self._with_workspace(lambda con: record_requests(con, lines, status))
        stamp = pd.Timestamp.now(tz="UTC").isoformat()
        with self._lock:
            new = lines.reindex(columns=STORED_COLUMNS).astype(object)
            new["sampled_at"] = new["sampled_at"].map(lambda v: "" if pd.isna(v) else pd.Timestamp(v).isoformat())
            known = self._memory["request_id"].isin(new["request_id"])
            self._memory.loc[known, ["status", "updated_at"]] = [status, stamp]
            add = new[~new["request_id"].isin(self._memory["request_id"])].assign(
                status=status, requested_at=stamp, updated_at=stamp, note="")
            self._memory = pd.concat([self._memory, add.fillna("")], ignore_index=True)
            self._changes += 1
            return len(new)

    def set_status(self, request_ids, status: str) -> int:
        """Set the status of stored lines."""
        from tracescreen.store.requests import REQUEST_STATUSES, set_request_status

        if self.workspace is not None:
            return self._with_workspace(lambda con: set_request_status(con, request_ids, status))
        if status not in REQUEST_STATUSES:
            raise ValueError(f"unknown request status {status!r}")
        with self._lock:
            hit = self._memory["request_id"].isin([str(i) for i in request_ids])
            self._memory.loc[hit, ["status", "updated_at"]] = [status, pd.Timestamp.now(tz="UTC").isoformat()]
            self._changes += 1
            return int(hit.sum())
