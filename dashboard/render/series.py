"""The site-and-metal chart and its summary (points from :mod:`dashboard.views.series`, trend from :mod:`dashboard.views.trend`)."""

from __future__ import annotations

from dash import html

from dashboard.render.figures import (
    is_site_sample,
    site_metal_figure,
    trend_trace,
)
from dashboard.state.session import SessionData
from dashboard.views.series import series_points
from dashboard.views.trend import series_trend
from tracescreen import vocabulary


def series_view(session: SessionData, site, analyte, fraction, log_y: bool = False):
    """Figure (plotly dict) and summary of one site, metal and fraction, cached per session."""
    return session.cached("series_view", (site, analyte, fraction, bool(log_y)),
                          lambda: _series_view(session, site, analyte, fraction, log_y))


def _series_view(session: SessionData, site, analyte, fraction, log_y):
    rows, pts = series_points(session, site, analyte, fraction)
    title = f"{session.site_name(site)} ({site}) · {analyte}, {fraction}"
    fig = site_metal_figure(rows, title, log_y=log_y, points=pts)
    n_qc = int((~is_site_sample(rows)).sum())
    counts = pts["status"].value_counts() if len(pts) else {}
    items = [html.Li(f"{vocabulary.GLYPH[s]} {vocabulary.LABEL[s]}: {int(counts[s])}")
             for s in vocabulary.RANKED if s in counts]
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
