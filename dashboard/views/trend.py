"""Trend of one series for the site-and-metal chart, from the engine's trend table (:mod:`tracescreen.statistics.trends`)."""

from __future__ import annotations

import pandas as pd

from dashboard.state.frames import engine_frame
from dashboard.views.trends import DIRECTION_WORDS, evidence_words


def _g(v, fmt: str = ".3g") -> str:
    return "–" if v is None or pd.isna(v) else format(float(v), fmt)


def series_trend(rows: pd.DataFrame, points: pd.DataFrame, alpha: float = 0.05) -> dict | None:
    """Trend test, Sen/ATS slope and trend line of one series, or ``None`` without statistics.

    Parameters
    ----------
    rows : DataFrame
        Screened rows of the series (for the lowest applicable limit).
    points : DataFrame
        One row per site-sample result (:func:`dashboard.figures.result_points`).

    Returns
    -------
    dict
        ``row`` (the engine's trend-table row), ``text`` (the result in words) and ``line``
        (``x``, ``y`` [µg/L] from the first to the last sampling date, ``label``), ``line`` is
        ``None`` when no slope could be computed.
    """
    if points.empty:
        return None
    from tracescreen import pipeline
    from tracescreen.statistics.options import StatisticsOptions
    from tracescreen.statistics.series import decimal_years

    keys = ["site_id", "analyte", "fraction", "sampled_at", "sample_type"]
    pts = engine_frame(points[keys + ["detected", "value_ug_L", "detection_limit_ug_L"]])
    lim = engine_frame(rows[keys + ["limit_ug_L", "limit_table", "basis"]])
    table = pipeline.trends(pts, lim, StatisticsOptions(alpha=alpha))
    if table.empty:
        return None
    r = table.iloc[0]
    test = str(r["test"]).replace("_", " ")
    text = (f"Trend ({test}, α = {alpha:g}): n = {int(r['n'])} ({int(r['n_nondetect'])} non-detects), "
            f"S = {_g(r['s'], '.0f')}: {DIRECTION_WORDS.get(r['direction'], r['direction'])}, "
            f"{evidence_words(float(r['p_value']) if pd.notna(r['p_value']) else float('nan'), alpha)}. "
            f"Slope ({r['slope_method']}) {_g(r['slope_per_year'])} µg/L per year "
            f"({100 * (1 - alpha):g} % interval {_g(r['slope_low'])} to {_g(r['slope_high'])}).")
    if pd.notna(r["crosses_limit_on"]):
        from dashboard.views.trends import CROSSING_CAUTION

        text += (f" The trend line would reach the lowest limit ({_g(r['lowest_limit_ug_L'])} µg/L, "
                 f"{r['lowest_limit_table']}) around {pd.Timestamp(r['crosses_limit_on']).date()}. "
                 f"Caution: {CROSSING_CAUTION}")
    if r["note"]:
        text += f" Notes: {r['note']}."
    line = None
    if pd.notna(r["slope_per_year"]) and pd.notna(r["intercept"]):
        t0, t1 = pd.Timestamp(r["first_sampled"]), pd.Timestamp(r["last_sampled"])
        years = float(decimal_years([t1])[0] - decimal_years([t0])[0])
        line = {"x": [t0, t1], "y": [float(r["intercept"]), float(r["intercept"]) + float(r["slope_per_year"]) * years],
                "label": f"{DIRECTION_WORDS.get(r['direction'], r['direction'])}, p = {_g(r['p_value'], '.2g')}"}
    return {"row": r, "text": text, "line": line}
