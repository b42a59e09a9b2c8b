"""Exceedances: every row above a limit or undecided (DL above the limit); CSV and XLSX of the rows on screen."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import (
    PageCallbacks,
    register_download_query,
    register_server_grid,
    register_url_state,
    rows_on_screen,
)
from dashboard.render.components import page_header, status_legend
from dashboard.render.grid import FILTER_HELP, Column, grid_toolbar, server_grid
from dashboard.state.store import current_session
from dashboard.views.grid_query import FilterError
from dashboard.views.links import chart_links
from dashboard.views.tables import exceedance_rows, to_csv_bytes, to_xlsx_bytes
from dashboard.views.url_state import grid_models

dash.register_page(__name__, path="/exceedances", name="Exceedances", order=3,
                   title="tracescreen · exceedances")
callbacks = PageCallbacks()

PAGE_SIZE = 25
#: on screen the deciding columns come first; downloads keep the engine's column order
COLUMNS = [
    Column("site_id", "Site", pinned=True, width=115), Column("sampled_at", "Sampled", "date", pinned=True),
    Column("analyte", "Metal", pinned=True, width=110),
    Column("chart", "Chart", "link", pinned=True, width=75), Column("fraction", "Fraction", width=100),
    Column("status", "Status", "status"), Column("result_text", "Result as reported", width=150),
    Column("unit", "Unit", width=80), Column("limit_ug_L", "Limit [µg/L]", "number", width=110),
    Column("ratio", "Ratio result/limit", "number", digits=3, width=150),
    Column("limit_table", "Limit table", width=170), Column("duration", "Duration", width=100),
    Column("use", "Use", width=110), Column("sample_id", "Sample", width=120),
    Column("value_ug_L", "Value [µg/L]", "number", width=110),
    Column("detection_limit_ug_L", "DL [µg/L]", "number", width=100),
    Column("source", "Source", "words", hidden=True), Column("note", "Note", "words"),
    ]


def layout(**query):
    filter_model, sort_model = grid_models(query, "exc")
    return html.Div([
        page_header("Exceedances", "Every site-sample result above a limit (Above limit) or that cannot "
                    "be decided: its detection limit is above the limit, or it is reported above the "
                    "calibrated range at a value at or below the limit. With the limit, the ratio "
                    "result/limit and the limit's source. " + FILTER_HELP
                    + " Downloads hold exactly the rows the table shows, in its order."),
        status_legend(),
        grid_toolbar("exc", "exc-grid", COLUMNS, [
            html.Button("Download CSV", id="exc-csv-btn", className="button"),
            html.Button("Download XLSX", id="exc-xlsx-btn", className="button")]),
        html.Div(id="exc-error", className="error", role="alert"),
        dcc.Store(id="exc-query", data={"filterModel": filter_model, "sortModel": sort_model}),
        dcc.Store(id="exc-url"), dcc.Store(id="exc-shown"),
        dcc.Loading(server_grid("exc-grid", COLUMNS, PAGE_SIZE, filter_model=filter_model, sort_model=sort_model),
                    type="dot", delay_show=300),
        dcc.Download(id="exc-download"),
    ])


register_server_grid(callbacks, "exc", "exc-grid", COLUMNS, exceedance_rows, extra=chart_links)


def download(session, kind, query_data):
    """The ``dcc.Download`` payload of the rows on screen (plain function); ``None`` and a message when
    the table's filter could not be applied."""
    try:
        rows = rows_on_screen(session, "exc", exceedance_rows, query_data, COLUMNS)
    except FilterError as exc:
        return None, f"Nothing downloaded: the filter could not be applied ({exc})."
    if kind == "xlsx":
        return dcc.send_bytes(to_xlsx_bytes(rows), "exceedances.xlsx"), ""
    return dcc.send_bytes(to_csv_bytes(rows), "exceedances.csv"), ""


register_download_query(callbacks, "exc", "exc-grid", ["exc-csv-btn", "exc-xlsx-btn"])


@callbacks.callback(
    Output("exc-download", "data"), Output("exc-error", "children", allow_duplicate=True),
    Input("exc-shown", "data"), State("dataset-key", "data"), prevent_initial_call=True,
)
def download_exceedances(query_data, dataset_key):
    kind = "xlsx" if (query_data or {}).get("button") == "exc-xlsx-btn" else "csv"
    payload, message = download(current_session(dataset_key), kind, query_data)
    return payload if payload is not None else dash.no_update, message


register_url_state(callbacks, "/exceedances", "exc-url", [("exc", "exc-query", "data", "grid", None)])
