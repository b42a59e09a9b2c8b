"""Layout pieces shared by the pages: caution, filters, status legend, tables."""

from __future__ import annotations

from dash import dcc, html

from tracescreen import vocabulary
from tracescreen.caution import CAUTION


def caution_banner() -> html.Div:
    """The caution, shown at the top of every page."""
    return html.Div([html.Strong("Caution. "), CAUTION], id="caution", className="caution",
                    role="note")


def page_header(title: str, intro: str) -> html.Div:
    """A page's title and one paragraph saying what it shows."""
    return html.Div([html.H2(title), html.P(intro, className="intro")], className="page-header")


def status_legend() -> html.Div:
    """Glyph, colour and words of every status."""
    return html.Div(
        [html.Span([html.Span(vocabulary.GLYPH[s], className="glyph", **{"aria-hidden": "true"}),
                    f" {vocabulary.LABEL[s]}"], className=f"legend-item status-text status-{s}")
         for s in vocabulary.RANKED],
        className="legend",
    )


def filter_controls(prefix: str, values: dict | None = None) -> html.Div:
    """Water use, limit table, fraction, date range and campaign filters (options filled by callback;
    ``values``: the shared filters read from the address, :func:`dashboard.views.url_state.shared_filters`)."""
    v = values or {}

    def chosen(key):  # until the callback fills the options, the values read from the address are options
        return [{"label": x, "value": x} for x in v.get(key) or []]

    return html.Div(
        [
            html.Div([html.Label("Water use", htmlFor=f"{prefix}-uses"),
                      dcc.Dropdown(id=f"{prefix}-uses", multi=True, placeholder="all uses", value=v.get("uses") or [],
                                   options=chosen("uses"))],
                     className="filter"),
            html.Div([html.Label("Limit table", htmlFor=f"{prefix}-tables"),
                      dcc.Dropdown(id=f"{prefix}-tables", multi=True, placeholder="all tables",
                                   value=v.get("tables") or [], options=chosen("tables"))],
                     className="filter wide"),
            html.Div([html.Label("Fraction", htmlFor=f"{prefix}-fraction"),
                      dcc.Dropdown(id=f"{prefix}-fraction", value=v.get("fraction") or "all", clearable=False,
                                   options=[{"label": "all fractions", "value": "all"}]
                                   + [{"label": f, "value": f} for f in [v.get("fraction")] if f and f != "all"])],
                     className="filter narrow"),
            html.Div([html.Label("Sampling dates", htmlFor=f"{prefix}-dates"),
                      dcc.DatePickerRange(id=f"{prefix}-dates", display_format="YYYY-MM-DD", clearable=True,
                                          start_date=v.get("start"), end_date=v.get("end"))],
                     className="filter"),
            html.Div([html.Label("Campaign", htmlFor=f"{prefix}-campaigns"),
                      dcc.Dropdown(id=f"{prefix}-campaigns", multi=True, placeholder="all campaigns",
                                   value=v.get("campaigns") or [], options=chosen("campaigns"))],
                     className="filter"),
        ],
        className="filters",
    )
