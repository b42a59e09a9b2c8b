"""Where each series is heading: the engine's trend table (``trends.csv``) of a session, in words.

:func:`trend_table` is :func:`tracescreen.pipeline.trends` on the session's results (Mann-Kendall or
seasonal Kendall test with the Sen / Akritas-Theil-Sen slope, and the date the trend line would reach
the lowest limit); it is computed once per session, for the base data on a worker thread at start
(a million results take about a minute), so pages ask :func:`trend_table_if_ready` first.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from dashboard.state.frames import engine_frame
from dashboard.state.session import SessionData

ALPHA = 0.05
#: the arrow shown for each direction of the engine's trend table
ARROW = {"increasing": "\u2191", "decreasing": "\u2193", "no_trend": "\u2192", "too_few": ""}
DIRECTION_WORDS = {"increasing": "increasing", "decreasing": "decreasing", "no_trend": "no significant trend",
                   "too_few": "too few values"}
#: the caution shown beside every limit-crossing date
CROSSING_CAUTION = ("A crossing date extends the straight trend line through past results to the lowest "
                    "limit: an indication of where the series is heading if nothing changes, not a "
                    "forecast. It is uncertain, more so the further it lies beyond the last sample.")


def trend_table(session: SessionData) -> pd.DataFrame:
    """The engine's trend table of every series of the session (site samples), computed once."""

    def compute():
        from dashboard.state.frames import accepted_from_session
        from tracescreen import pipeline
        from tracescreen.statistics.options import StatisticsOptions

        screened = engine_frame(session.screened.drop(columns=["_rid", "campaign"], errors="ignore"))
        return pipeline.trends(accepted_from_session(session), screened, StatisticsOptions(alpha=ALPHA))

    return session.derived("trends", compute)


def trend_table_if_ready(session: SessionData) -> pd.DataFrame | None:
    """The trend table when it is computed, else ``None`` (never waits)."""
    return trend_table(session) if session.ready("trends") else None


def evidence_words(p: float, alpha: float = ALPHA) -> str:
    """A p-value in plain words (the usual reading of a two-sided test; common practice)."""
    if p is None or not np.isfinite(p):
        return "not tested"
    if p < 0.01:
        return f"strong evidence of a trend (p = {p:.2g})"
    if p < alpha:
        return f"evidence of a trend (p = {p:.2g})"
    if p < 0.1:
        return f"weak evidence, not significant at {alpha:.0%} (p = {p:.2g})"
    return f"no evidence of a trend (p = {p:.2g})"


def trend_rows(session: SessionData) -> pd.DataFrame | None:
    """The trend table as the Trends page shows it (``None`` while it is computed)."""
    table = trend_table_if_ready(session)
    if table is None:
        return None

    def compute():
        t = table.copy()
        direction = t["direction"].astype(str)
        t["direction_words"] = (direction.map(ARROW).fillna("") + " " + direction.map(DIRECTION_WORDS).fillna(direction)).str.strip()
        t["evidence"] = [evidence_words(p) for p in t["p_value"].to_numpy(float)]
        t["site_name"] = [session.site_name(s) for s in t["site_id"].astype(str)]
        for c in ("first_sampled", "last_sampled", "crosses_limit_on"):
            t[c] = pd.to_datetime(t[c])
        t["test"] = t["test"].astype(str).str.replace("_", " ")
        return t.reset_index(drop=True)

    return session.derived("trend_rows", compute)


def cell_trends(session: SessionData) -> dict | None:
    """Per (site, metal): the trend of each fraction as ``(fraction, direction, p)``; ``None`` while computed."""
    table = trend_table_if_ready(session)
    if table is None:
        return None

    def compute():
        out: dict = {}
        for site, analyte, fraction, direction, p in zip(table["site_id"].astype(str), table["analyte"].astype(str),
                                                         table["fraction"].astype(str), table["direction"].astype(str),
                                                         table["p_value"].to_numpy(float)):
            out.setdefault((site, analyte), []).append((fraction, direction, p))
        return out

    return session.derived("cell_trends", compute)


def start_trend_table(session: SessionData) -> None:
    """Start computing the session's trend table on a worker thread (once); pages poll :meth:`SessionData.ready`."""
    from threading import Thread

    if session.ready("trends") or session.ready("trends_started"):
        return
    session.derived("trends_started", lambda: Thread(target=trend_table, args=(session,), daemon=True,
                                                     name="tracescreen-trends").start())
