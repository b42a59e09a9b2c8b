"""Retest-list logic: the engine's retest flags for a session, when the engine provides them."""

from __future__ import annotations

import importlib
import importlib.util

import pandas as pd

from dashboard.data import SessionData, engine_frame


def retest_available() -> bool:
    """Whether the installed engine has the retest flags (``tracescreen.retest.listing.retest_list``)."""
    return importlib.util.find_spec("tracescreen.retest.listing") is not None


def retest_frame(session: SessionData) -> pd.DataFrame | None:
    """The retest list of a session (engine rows, cached), or ``None`` without the retest module."""
    if not retest_available():
        return None

    def compute():
        module = importlib.import_module("tracescreen.retest.listing")
        return module.retest_list(engine_frame(session.screened.drop(columns=["_rid", "campaign"],
                                                                     errors="ignore")))

    return session.derived("retest", compute)


def reason_totals(frame: pd.DataFrame) -> pd.DataFrame:
    """Flagged rows per reason code."""
    return frame["reason"].astype(str).value_counts().rename_axis("reason").reset_index(name="rows")
