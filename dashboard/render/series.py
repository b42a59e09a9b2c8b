"""The site-and-metal chart, its summary and its data as a table (rows from :mod:`dashboard.views.series`,
trend from :mod:`dashboard.views.trend`)."""

from __future__ import annotations

import numpy as np
import pandas as pd
from dash import html

from dashboard.render.figures import trend_trace
from dashboard.render.site_chart import site_chart
from dashboard.state.frames import text_values
from dashboard.state.session import SessionData
from dashboard.views.limits import no_limit_reason
from dashboard.views.matrix import Filters
from dashboard.views.series import qc_rows, selection_rows
from dashboard.views.trend import series_trend
from tracescreen import vocabulary


def chart_title(session: SessionData, site, analyte, fraction) -> str:
    """``Site name (S01) · metal, fraction``."""
    return f"{session.site_name(site)} ({site}) · {analyte}, {'all fractions' if fraction == 'all' else fraction}"


def series_view(session: SessionData, site, analyte, fraction, log_y: bool = False, filters: Filters | None = None):
    """Figure (plotly dict), summary and the points as table rows of one site, metal and fraction
    (or all fractions), with the page's filters; cached per session."""
    filters = filters or Filters()
    return session.cached("series_view", (site, analyte, fraction, bool(log_y), filters),
                           lambda: _series_view(session, site, analyte, fraction, log_y, filters), size=16)


def _series_view(session, site, analyte, fraction, log_y, filters):
    rows = selection_rows(session, site, analyte, fraction, filters)
    fig, points = site_chart(rows, chart_title(session, site, analyte, fraction), log_y, (filters.start, filters.end))
    pts = pd.concat([p.assign(fraction_shown=f) for f, p in points.items() if len(p)], ignore_index=True) \
        if any(len(p) for p in points.values()) else None
    counts = pts["status"].value_counts() if pts is not None else {}
    items = [html.Li([html.Span(vocabulary.GLYPH[s], className="glyph"), f" {vocabulary.LABEL[s]}: {int(counts[s])}"],
                     className=f"status-text status-{s}") for s in vocabulary.RANKED if s in counts]
    n = 0 if pts is None else len(pts)
    detected = 0 if pts is None else int(pts["detected"].sum())
    summary = [html.P(f"{n} site-sample results ({detected} detected, {n - detected} non-detects); each counted "
                      f"under its worst status against the single-sample limits drawn. {qc_rows(session, site, analyte, fraction)} "
                      "QC rows (blanks, duplicates) are not plotted.", id="site-counts")]
    filtered = _filter_words(filters)
    if filtered:
        summary.append(html.P(f"Filtered as on the overview: {filtered}.", id="site-filters", className="count-text"))
    summary.append(html.Ul(items, className="status-list"))
    if not any(t.get("meta", {}).get("role") in ("limit", "period_limit") for t in fig["data"]):
        reasons = [f"{f}: {no_limit_reason(session, site, analyte, f)}" for f in rows] or ["no results"]
        summary.append(html.P("No limit applies, so no line is drawn: " + "; ".join(reasons) + ".",
                              id="site-no-limit", className="notice"))
    return fig, summary, _table_rows(pts)


def _table_rows(pts: pd.DataFrame | None) -> list[dict]:
    """The chart's points as rows (the "data as a table" view)."""
    if pts is None or not len(pts):
        return []
    detected = pts["detected"].to_numpy(dtype=bool)
    value = np.where(detected, pts["value_ug_L"].to_numpy(float), np.nan)
    status = pts["status"].astype(str).to_numpy()
    return [{"sampled_at": str(pd.Timestamp(d).date()) if pd.notna(d) else "", "fraction": f, "result_text": r,
             "unit": u, "detected": "detected" if det else "not detected", "value_ug_L": None if v != v else float(v),
             "detection_limit_ug_L": None if dl != dl else float(dl), "status": vocabulary.LABEL[s], "status_code": s,
             "above": ex, "sample_id": sid}
            for d, f, r, u, det, v, dl, s, ex, sid in zip(
                pts["sampled_at"], pts["fraction_shown"], text_values(pts["result_text"]), text_values(pts["unit"]),
                detected, value, pts["detection_limit_ug_L"].to_numpy(float), status,
                pts["exceeded"] if "exceeded" in pts else [""] * len(pts), text_values(pts["sample_id"]))]


def _filter_words(f: Filters) -> str:
    parts = []
    if f.tables:
        parts.append("limit tables " + ", ".join(f.tables))
    if f.uses:
        parts.append("uses " + ", ".join(f.uses))
    if f.start or f.end:
        parts.append(f"sampled {f.start or 'from the start'} to {f.end or 'the end'}")
    if f.campaigns:
        parts.append("campaigns " + ", ".join(f.campaigns))
    return "; ".join(parts)


def trend_view(session: SessionData, site, analyte, fraction, filters: Filters | None = None):
    """Trend traces (plotly dicts) and their texts for the fractions shown, cached per session.

    Kept apart from :func:`series_view` so the chart shows at once and the statistics follow. The
    trend is over each series' whole record (the table filters and dates do not change it).
    """
    def compute():
        traces, texts = [], []
        for k, (f, rows) in enumerate(selection_rows(session, site, analyte, fraction, None).items()):
            from dashboard.render.figures import result_points

            pts = result_points(rows)
            trend = series_trend(rows, pts) if len(pts) else None
            if trend is None:
                continue
            if trend["line"]:
                line = dict(trend["line"], label=(f"{f}: " if fraction == "all" else "") + trend["line"]["label"])
                trace = trend_trace(line)
                if k % 2:
                    trace["line"]["dash"] = "dash"
                traces.append(trace)
            texts.append((f"{f}: " if fraction == "all" else "") + trend["text"])
        return traces, texts

    return session.cached("trend_view", (site, analyte, fraction), compute)
