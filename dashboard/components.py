"""Layout pieces shared by the pages: caution, filters, status legend, tables."""

from __future__ import annotations

from dash import Input, Output, callback, dash_table, dcc, html

from tracescreen.caution import CAUTION

from dashboard.data import NO_DAY, SessionData, current_session
from dashboard.tables import LONG_TEXT_COLUMNS, table_page
from dashboard.palette import STATUS_COLOUR, STATUS_GLYPH, STATUS_LABEL, STATUS_ORDER


def caution_banner() -> html.Div:
    """The caution, shown at the top of every page."""
    return html.Div([html.Strong("Caution. "), CAUTION], id="caution", className="caution",
                    role="note")


def page_header(title: str, intro: str) -> html.Div:
    return html.Div([html.H2(title), html.P(intro, className="intro")], className="page-header")


def status_legend() -> html.Div:
    """Glyph, colour and words of every status."""
    return html.Div(
        [html.Span([html.Span(STATUS_GLYPH[s], className="glyph", style={"color": STATUS_COLOUR[s]}),
                    f" {STATUS_LABEL[s]}"], className="legend-item") for s in STATUS_ORDER],
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


def filter_options(session: SessionData) -> tuple:
    """Options of the filter controls for a session: uses, tables, fractions, date bounds, campaigns."""
    tables = []
    tt = getattr(session.limits, "tables", None)
    names = {}
    if tt is not None and "table_id" in tt:
        names = dict(zip(tt["table_id"].astype(str), tt.get("name", tt["table_id"]).astype(str)))
    for t in session.tables:
        tables.append({"label": f"{t} — {names.get(t, t)}", "value": t})
    fractions = [{"label": "all fractions", "value": "all"}] + [
        {"label": f, "value": f} for f in session.fractions]
    days = session.day[session.day != NO_DAY]
    lo = str(days.min().astype("datetime64[D]")) if len(days) else None
    hi = str(days.max().astype("datetime64[D]")) if len(days) else None
    return ([{"label": u, "value": u} for u in session.uses], tables, fractions, lo, hi,
            [{"label": c, "value": c} for c in session.campaigns])


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


def register_filter_options(prefix: str) -> None:
    """Callback filling the filter controls made by :func:`filter_controls` from the session's data."""

    @callback(
        Output(f"{prefix}-uses", "options"), Output(f"{prefix}-tables", "options"),
        Output(f"{prefix}-fraction", "options"), Output(f"{prefix}-dates", "min_date_allowed"),
        Output(f"{prefix}-dates", "max_date_allowed"), Output(f"{prefix}-campaigns", "options"),
        Input("dataset-key", "data"),
    )
    def fill_filter_options(dataset_key):
        return filter_options(current_session(dataset_key))


def register_server_table(prefix: str, frame_for, page_size: int) -> None:
    """Callback serving the pages of table ``{prefix}-table`` from ``frame_for(session)``, with its
    ``{prefix}-count`` text and ``{prefix}-error`` message (filter, sort and paging on the server)."""

    @callback(
        Output(f"{prefix}-table", "data"), Output(f"{prefix}-table", "page_count"),
        Output(f"{prefix}-count", "children"), Output(f"{prefix}-error", "children"),
        Output(f"{prefix}-table", "tooltip_data"),
        Input("dataset-key", "data"), Input(f"{prefix}-table", "page_current"),
        Input(f"{prefix}-table", "page_size"), Input(f"{prefix}-table", "sort_by"),
        Input(f"{prefix}-table", "filter_query"),
    )
    def serve_table_page(dataset_key, page_current, size, sort_by, filter_query):
        frame = frame_for(current_session(dataset_key))
        return table_page(frame, page_current, size or page_size, sort_by, filter_query)
