"""The retest list of a session, from the engine's pipeline (:func:`tracescreen.pipeline.retest`), with the
laboratory QC review's reasons (:mod:`dashboard.views.labqc`)."""

from __future__ import annotations

import pandas as pd

from dashboard.state.frames import engine_frame
from dashboard.state.session import SessionData


def retest_frame(session: SessionData) -> pd.DataFrame:
    """The retest list of a session (the engine's rows with its default thresholds; computed once per session)."""

    from dashboard.views.labqc import lab_qc

    # the laboratory QC review's reasons join the list; derived first, as a value of its own (the
    # session's derived values are computed under one lock, so one may not ask for another)
    review, _results, calibration = lab_qc(session)

    def compute():
        from tracescreen import pipeline
        from tracescreen.retest.options import RetestOptions

        out = pipeline.retest(engine_frame(session.screened.drop(columns=["_rid", "campaign"], errors="ignore")),
                              RetestOptions(), lab_qc=pipeline.lab_qc_retest(review, calibration))
        return calibration.annotate(out) if calibration is not None else out

    return session.derived("retest", compute)


def reason_totals(frame: pd.DataFrame) -> pd.DataFrame:
    """Flagged rows per reason code."""
    return frame["reason"].astype(str).value_counts().rename_axis("reason").reset_index(name="rows")
