"""The retest list of a session, from the engine's pipeline (:func:`tracescreen.pipeline.retest`)."""

from __future__ import annotations

import pandas as pd

from dashboard.state.frames import engine_frame
from dashboard.state.session import SessionData


def retest_frame(session: SessionData) -> pd.DataFrame:
    """The retest list of a session (the engine's rows with its default thresholds; computed once per session)."""

    def compute():
        from tracescreen import pipeline
        from tracescreen.retest.options import RetestOptions

        return pipeline.retest(engine_frame(session.screened.drop(columns=["_rid", "campaign"], errors="ignore")),
                               RetestOptions())

    return session.derived("retest", compute)


def reason_totals(frame: pd.DataFrame) -> pd.DataFrame:
    """Flagged rows per reason code."""
    return frame["reason"].astype(str).value_counts().rename_axis("reason").reset_index(name="rows")
