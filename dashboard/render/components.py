"""Layout pieces shared by the pages: caution, filters, status legend, tables."""

from __future__ import annotations

from dash import dash_table, dcc, html

from dashboard.views.tables import LONG_TEXT_COLUMNS
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
        [html.Span([html.Span(vocabulary.GLYPH[s], className="glyph", style={"color": vocabulary.COLOUR[s]}),
                    f" {vocabulary.LABEL[s]}"], className="legend-item") for s in vocabulary.RANKED],
        className="legend",
    )


def filter_controls(prefix: str) -> html.Div:
    """Water use, limit table, fraction, date range and campaign filters (options filled by callback)."""
    return html.Div(
        [
            html.Div([html.Label("Water use", htmlFor=f"{prefix}-uses"),
                      dcc.Dropdown(id=f"{prefix}-uses", multi=True, placeholder="all uses")],
                     className="filter"),
            html.Div([html.Label("Limit table", htmlFor=f"{prefix}-tables"),
                      dcc.Dropdown(id=f"{prefix}-tables", multi=True, placeholder="all tables")],
                     className="filter wide"),
            html.Div([html.Label("Fraction", htmlFor=f"{prefix}-fraction"),
                      dcc.Dropdown(id=f"{prefix}-fraction", value="all", clearable=False,
                                   options=[{"label": "all fractions", "value": "all"}])],
                     className="filter narrow"),
            html.Div([html.Label("Sampling dates", htmlFor=f"{prefix}-dates"),
                      dcc.DatePickerRange(id=f"{prefix}-dates", display_format="YYYY-MM-DD",
                                          clearable=True)],
                     className="filter"),
            html.Div([html.Label("Campaign", htmlFor=f"{prefix}-campaigns"),
                      dcc.Dropdown(id=f"{prefix}-campaigns", multi=True, placeholder="all campaigns")],
                     className="filter"),
        ],
        className="filters",
    )


def data_table(table_id: str, columns: list, page_size: int = 25, server_side: bool = True,
               **kwargs) -> dash_table.DataTable:
    """A sortable, filterable table; with ``server_side`` the server filters, sorts and pages.

    ``columns`` are column ids or ``(id, heading)`` pairs.
    """
    columns = [c if isinstance(c, tuple) else (c, c) for c in columns]
    mode = "custom" if server_side else "native"
    return dash_table.DataTable(
        id=table_id,
        columns=[{"name": name, "id": cid} for cid, name in columns],
        page_current=0,
        page_size=page_size,
        page_action=mode,
        sort_action=mode,
        sort_mode="multi",
        filter_action=mode,
        style_table={"overflowX": "auto"},
        style_cell={"fontFamily": "inherit", "fontSize": "13px", "padding": "4px 8px",
                    "whiteSpace": "nowrap", "textAlign": "left"},
        style_cell_conditional=[
            {"if": {"column_id": c}, "maxWidth": "320px", "overflow": "hidden", "textOverflow": "ellipsis"}
            for c in LONG_TEXT_COLUMNS],
        tooltip_delay=300,
        tooltip_duration=None,
        style_header={"fontWeight": "600", "backgroundColor": "#f1f3f5"},
        **kwargs,
    )


