"""Site-and-metal logic: choices, the chart and its summary for one series (plain functions)."""

from __future__ import annotations

import numpy as np
from dash import html

from dashboard.data import SessionData
from dashboard.figures import is_site_sample, result_points, site_metal_figure, trend_trace
from dashboard.palette import STATUS_GLYPH, STATUS_LABEL, STATUS_ORDER
from dashboard.trend import series_trend


def site_options(session: SessionData) -> list[dict]:
    """Site dropdown options, ``"S01 — Name"``."""
    out = []
    for s in session.site_ids:
        name = session.site_name(s)
        out.append({"label": f"{s} — {name}" if name != s else s, "value": s})
    return out


def _pairs(session: SessionData) -> dict[str, list[str]]:
    def compute():
        keys = np.unique(session.series_key)
        n_f = max(len(session.fractions), 1)
        site = keys // (len(session.analytes) * n_f)
        analyte = (keys // n_f) % len(session.analytes)
        out: dict[str, list[str]] = {}
        for s, a in sorted(set(zip(site.tolist(), analyte.tolist()))):
            if s >= 0 and a >= 0:
                out.setdefault(session.site_ids[s], []).append(session.analytes[a])
        return out

    return session.derived("site_analytes", compute)


def analyte_options(session: SessionData, site: str | None) -> list[dict]:
    """Metals measured at a site."""
    return [{"label": a, "value": a} for a in _pairs(session).get(site, session.analytes)]


def default_selection(session: SessionData, site=None, analyte=None, fraction=None):
    """Fill a missing or unknown site/metal/fraction with the first available one."""
    pairs = _pairs(session)
    if site not in pairs:
        site = next(iter(pairs), None)
    metals = pairs.get(site, [])
    if analyte not in metals:
        analyte = metals[0] if metals else None
    if fraction not in session.fractions:
        fraction = "total" if "total" in session.fractions else (session.fractions or [None])[0]
    return site, analyte, fraction


def series_view(session: SessionData, site, analyte, fraction, log_y: bool = False):
    """Figure (plotly dict) and summary of one site, metal and fraction, cached per session."""
    return session.cached("series_view", (site, analyte, fraction, bool(log_y)),
                          lambda: _series_view(session, site, analyte, fraction, log_y))


def series_points(session: SessionData, site, analyte, fraction):
    """Screened rows of one series and its points (:func:`dashboard.figures.result_points`),
    kept per session for the chart and the trend that follows it."""
    def compute():
        rows = session.series(site, analyte, fraction)
        return rows, result_points(rows)

    return session.cached("series_points", (site, analyte, fraction), compute, size=8)


def _series_view(session: SessionData, site, analyte, fraction, log_y):
    rows, pts = series_points(session, site, analyte, fraction)
    title = f"{session.site_name(site)} ({site}) · {analyte}, {fraction}"
    fig = site_metal_figure(rows, title, log_y=log_y, points=pts)
    n_qc = int((~is_site_sample(rows)).sum())
    counts = pts["status"].value_counts() if len(pts) else {}
    items = [html.Li(f"{STATUS_GLYPH[s]} {STATUS_LABEL[s]}: {int(counts[s])}")
             for s in STATUS_ORDER if s in counts]
    detected = int(pts["detected"].sum()) if len(pts) else 0
    summary = [
        html.P(f"{len(pts)} site-sample results ({detected} detected, {len(pts) - detected} "
               f"non-detects); each counted under its worst status against the limits below. "
               f"{n_qc} QC rows (blanks, duplicates) are not plotted.", id="site-counts"),
        html.Ul(items, className="status-list"),
    ]
    return fig, summary


def trend_view(session: SessionData, site, analyte, fraction):
    """Trend trace (plotly dict or ``None``) and its text for one series, cached per session.

    Kept apart from :func:`series_view` so the chart shows at once and the statistics follow.
    """
    def compute():
        rows, pts = series_points(session, site, analyte, fraction)
        trend = series_trend(rows, pts) if len(pts) else None
        if trend is None:
            return None, ""
        return (trend_trace(trend["line"]) if trend["line"] else None), trend["text"]

    return session.cached("trend_view", (site, analyte, fraction), compute)
