"""Wells against background and standards for a session, from the engine's pipeline
(:func:`tracescreen.pipeline.wells`): the tables once per session, the choice of a well and
constituent, and what the page shows for it."""

from __future__ import annotations

import pandas as pd

from dashboard.state.frames import accepted_from_session, engine_frame
from dashboard.state.session import SessionData
from tracescreen import vocabulary

SEP = "|"

LIMIT_FACTS = [("comparison", "Comparison"), ("comparison_reason", "Why"), ("background_source", "Background"),
               ("n_background", "Background values"), ("percent_nondetect", "Non-detects in background (%)"),
               ("distribution", "Distribution"), ("mean", "Mean (log scale if lognormal)"),
               ("sd", "Standard deviation"), ("df", "Degrees of freedom"), ("sd_pooled", "SD pooled over wells"),
               ("method", "Method"), ("plan", "Retest plan"), ("kappa", "kappa"), ("rank_from_top", "Order statistic (from the top)"),
               ("limit_ug_L", "Prediction limit (µg/L)"), ("design_false_positive_rate", "Design false positive rate"),
               ("achieved_false_positive_rate", "Achieved false positive rate"),
               ("power_3sd", "Power at +3 SD"), ("limit_notes", "Notes")]
SEQUENCE_COLUMNS = ["evaluation", "position", "sampled_at", "n_results", "compared_value_ug_L", "nondetect",
                    "comparison", "status", "note"]
CI_COLUMNS = ["limit_table", "standard_ug_L", "standard_basis", "n", "parameter", "method", "lcl_ug_L", "ucl_ug_L",
              "confidence", "achieved_confidence", "decision", "ucl_below_standard_from", "ci_notes"]


def wells_tables(session: SessionData) -> dict | None:
    """Every wells table of the session (computed once per session); None without a network."""
    if session.wells_options is None:
        return None

    def compute():
        from tracescreen import pipeline

        screened = engine_frame(session.screened.drop(columns=["_rid", "campaign"], errors="ignore"))
        return pipeline.wells(accepted_from_session(session), screened, session.wells_options)

    return session.derived("wells", compute)


def series_options(tables: dict) -> list[dict]:
    """One option per compliance well and constituent, those needing attention first."""
    from tracescreen.report.wells import attention

    status = tables["well_status"]
    keys = ["site_id", "analyte", "fraction"]
    first = attention(tables)[keys].assign(first=0)
    order = status.merge(first, on=keys, how="left").fillna({"first": 1}).sort_values(["first"] + keys)
    return [{"label": f"{r.site_id} · {r.analyte} ({r.fraction}) · {r.latest_status.replace('_', ' ')}",
             "value": SEP.join((r.site_id, r.analyte, r.fraction))} for r in order.itertuples()]


def _row(frame: pd.DataFrame, value: str) -> pd.DataFrame:
    site, analyte, fraction = value.split(SEP)
    return frame[(frame["site_id"] == site) & (frame["analyte"] == analyte) & (frame["fraction"] == fraction)]


def _text(v) -> str:
    if isinstance(v, float):
        return "" if pd.isna(v) else f"{v:.4g}"
    if isinstance(v, pd.Timestamp):
        return v.date().isoformat()
    return "" if v is None else str(v)


def series_view(tables: dict, value: str) -> dict:
    """What the page shows for one series: ``figure``, ``status`` (text), ``facts``, ``sequence``,
    ``confidence`` (lists of row dicts)."""
    from tracescreen.report.well_figures import well_figure

    site, analyte, fraction = value.split(SEP)
    st = _row(tables["well_status"], value)
    lim = _row(tables["prediction_limits"], value)
    status = ""
    if len(st):
        s = st.iloc[0]
        words = vocabulary.SEQUENCE_LABEL.get(s["latest_status"], s["latest_status"].replace("_", " "))
        status = (f"Latest: {words}. Evaluations {s['n_evaluations']}, initial exceedances "
                  f"{s['n_initial_exceedances']}, confirmed exceedances {s['n_confirmed_exceedances']}, "
                  f"resamples missing {s['n_resamples_missing']}.")
    facts = [{"setting": label, "value": _text(lim.iloc[0][col])} for col, label in LIMIT_FACTS] if len(lim) else []
    seq = _row(tables["retest_sequence"], value)[SEQUENCE_COLUMNS]
    ci = _row(tables["confidence_limits"], value)[CI_COLUMNS]
    as_rows = lambda f: [{c: _text(v) for c, v in r.items()} for r in f.to_dict("records")]  # noqa: E731
    return {"figure": well_figure(tables, site, analyte, fraction), "status": status, "facts": facts,
            "sequence": as_rows(seq), "confidence": as_rows(ci)}


def site_overlay(session: SessionData, site: str, analyte: str, fraction: str):
    """For the Site & metal chart: the background prediction limit of a compliance well as a line
    (plotly dict, or None) and a sentence with its status over the retest sequence (or "")."""
    tables = wells_tables(session)
    if tables is None:
        return None, ""
    value = SEP.join((str(site), str(analyte), str(fraction)))
    lim = _row(tables["prediction_limits"], value)
    st = _row(tables["well_status"], value)
    if lim.empty:
        return None, ""
    r = lim.iloc[0]
    words = vocabulary.SEQUENCE_LABEL.get(st.iloc[0]["latest_status"], "") if len(st) else ""
    text = (f"Against background ({r['comparison']}, {r['method'].replace('_', ' ')}, {r['plan']}): "
            f"{words or 'no compliance data'}.")
    seq = _row(tables["retest_sequence"], value)
    if pd.isna(r["limit_ug_L"]) or seq.empty:
        return None, text
    x = [seq["sampled_at"].min(), seq["sampled_at"].max()]
    trace = {"type": "scatter", "mode": "lines", "x": x, "y": [float(r["limit_ug_L"])] * 2,
             "name": f"background prediction limit {r['limit_ug_L']:.4g} µg/L ({r['plan']})",
             "line": {"dash": "dashdot", "width": 2, "color": vocabulary.SEQUENCE_COLOUR["confirmed_exceedance"]},
             "hoverinfo": "name", "meta": {"role": "background_limit"}}
    return trace, text
