"""Exceedances: every row above a limit or undecided (DL above the limit); CSV and XLSX download."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_server_table
from dashboard.render.components import data_table, page_header, status_legend
from dashboard.state.store import current_session
from dashboard.views.tables import (
    ATTENTION_STATUSES,
    FilterError,
    exceedance_rows,
    query_table,
    to_csv_bytes,
    to_xlsx_bytes,
)
from tracescreen import vocabulary

dash.register_page(__name__, path="/exceedances", name="Exceedances", order=3,
                   title="tracescreen · exceedances")
callbacks = PageCallbacks()

PAGE_SIZE = 25
#: on screen the deciding columns come first; downloads keep the engine's column order
SHOWN = [("site_id", "Site"), ("sampled_at", "Sampled"), ("analyte", "Metal"), ("fraction", "Fraction"),
         ("status", "Status"), ("result_text", "Result as reported"), ("unit", "Unit"),
         ("limit_ug_L", "Limit [µg/L]"), ("ratio", "Ratio"), ("limit_table", "Limit table"),
         ("duration", "Duration"), ("use", "Use"), ("sample_id", "Sample"),
         ("value_ug_L", "Value [µg/L]"), ("detection_limit_ug_L", "DL [µg/L]"),
         ("source", "Source"), ("note", "Note")]
_STATUS_STYLE = [
    {"if": {"filter_query": f'{{status}} = "{s}"', "column_id": "status"},
     "color": vocabulary.COLOUR[s], "fontWeight": "600"}
    for s in ATTENTION_STATUSES
]


def layout(**_query):
    return html.Div([
        page_header("Exceedances", "Every site-sample result above a limit (exceeds) or that cannot "
                    "be decided because its detection limit is above the limit "
                    "(nondetect_inconclusive) or because it is reported above the calibrated range at "
                    "a value at or below the limit (above_range_inconclusive), with the limit, the ratio result/limit and the "
                    "limit's source. Type in the row under the headers to filter (e.g. > 2 in "
                    "ratio); click a header to sort. Downloads hold the filtered, sorted rows."),
        status_legend(),
        html.Div([
            html.Button("Download CSV", id="exc-csv-btn", className="button"),
            html.Button("Download XLSX", id="exc-xlsx-btn", className="button"),
            html.Span(id="exc-count", className="count-text"),
        ], className="toolbar"),
        html.Div(id="exc-error", className="error", role="alert"),
        data_table("exc-table", SHOWN, page_size=PAGE_SIZE, style_data_conditional=_STATUS_STYLE),
        dcc.Download(id="exc-download"),
    ])


register_server_table(callbacks, "exc", exceedance_rows, PAGE_SIZE)


def download(session, kind, sort_by, filter_query):
    """The ``dcc.Download`` payload of the filtered, sorted exceedance rows (plain function)."""
    try:
        rows = query_table(exceedance_rows(session), filter_query, sort_by)
    except FilterError:
        rows = exceedance_rows(session)
    if kind == "xlsx":
        return dcc.send_bytes(to_xlsx_bytes(rows), "exceedances.xlsx")
    return dcc.send_bytes(to_csv_bytes(rows), "exceedances.csv")


@callbacks.callback(
    Output("exc-download", "data"),
    Input("exc-csv-btn", "n_clicks"), Input("exc-xlsx-btn", "n_clicks"),
    State("dataset-key", "data"), State("exc-table", "sort_by"), State("exc-table", "filter_query"),
    prevent_initial_call=True,
)
def download_exceedances(_csv, _xlsx, dataset_key, sort_by, filter_query):
    kind = "xlsx" if dash.ctx.triggered_id == "exc-xlsx-btn" else "csv"
    return download(current_session(dataset_key), kind, sort_by, filter_query)
