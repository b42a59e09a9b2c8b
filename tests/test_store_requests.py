"""Retest request statuses in the workspace (format 2), and a format-1 workspace brought up to date on opening."""

from __future__ import annotations

import pandas as pd
import pytest

from tracescreen.store.database import WORKSPACE_FILE
from tracescreen.store.requests import read_requests, record_requests, set_request_status
from tracescreen.store.schema import SCHEMA_VERSION
from tracescreen.store.workspace import open_workspace


def _lines(ids):
    return pd.DataFrame({"request_id": ids, "lab": "Lab X", "batch": "B1", "site_id": "S1", "sample_id": ids,
                         "sampled_at": pd.Timestamp("2024-01-10"), "analytes": "arsenic", "action": "resample",
                         "reasons": "close to the limit", "reason_codes": "near_limit"})


def test_statuses_are_kept_across_openings(tmp_path):
    with open_workspace(tmp_path / "ws", create=True) as ws:
        assert record_requests(ws.con, _lines(["a", "b"])) == 2
        set_request_status(ws.con, ["a"], "confirmed")
    with open_workspace(tmp_path / "ws") as ws:
        stored = read_requests(ws.con).set_index("request_id")
        assert stored.loc["a", "status"] == "confirmed" and stored.loc["b", "status"] == "requested"
        record_requests(ws.con, _lines(["b", "c"]))  # b again: still one line, its status as sent now
        assert list(read_requests(ws.con)["request_id"]) == ["a", "b", "c"]
        with pytest.raises(ValueError, match="must be one of"):
            set_request_status(ws.con, ["a"], "maybe")


def test_format_1_workspace_is_migrated_on_opening(tmp_path):
    import sqlite3

    with open_workspace(tmp_path / "ws", create=True):
        pass
    con = sqlite3.connect(tmp_path / "ws" / WORKSPACE_FILE)  # as an older tracescreen left it
    con.execute("DROP TABLE retest_requests")
    con.execute("PRAGMA user_version = 1")
    con.commit()
    con.close()
    with open_workspace(tmp_path / "ws") as ws:
        assert ws.con.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION == 2
        assert read_requests(ws.con).empty
        assert ws.check() == []
