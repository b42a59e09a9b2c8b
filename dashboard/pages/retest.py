"""Retest list: results a reviewer should send back for confirmation, with reason and action."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_server_table
from dashboard.render.components import data_table, page_header
from dashboard.render.quality import html_table
from dashboard.state.store import current_session
from dashboard.views.retest import reason_totals, retest_frame
from dashboard.views.tables import to_csv_bytes

dash.register_page(__name__, path="/retest", name="Retest list", order=4,
                   title="tracescreen · retest list")
callbacks = PageCallbacks()
PAGE_SIZE = 20
#: what to act on first; the CSV download keeps the engine's column order
COLUMNS = ["site_id", "sampled_at", "analyte", "fraction", "reason", "detail", "suggested_action",
           "sample_id", "lab", "batch"]


def layout(**_query):
    return html.Div([
        page_header("Retest list", "Results a reviewer should send back for confirmation: one row per "
                    "result and reason, with what a laboratory can act on and a suggested action."),
        html.Div(id="rt-reasons"),
        html.Div([html.Button("Download CSV", id="rt-csv-btn", className="button"),
                  html.Span(id="rt-count", className="count-text")], className="toolbar"),
        html.Div(id="rt-error", className="error", role="alert"),
        data_table("rt-table", COLUMNS, page_size=PAGE_SIZE),
        dcc.Download(id="rt-download"),
    ])


@callbacks.callback(Output("rt-reasons", "children"), Input("dataset-key", "data"))
def update_retest_reasons(dataset_key):
    frame = retest_frame(current_session(dataset_key))
    return html_table(reason_totals(frame), "rt-reasons-table") if frame is not None else ""


register_server_table(callbacks, "rt", retest_frame, PAGE_SIZE)


@callbacks.callback(Output("rt-download", "data"), Input("rt-csv-btn", "n_clicks"),
          State("dataset-key", "data"), prevent_initial_call=True)
def download_retest(_n, dataset_key):
    return dcc.send_bytes(to_csv_bytes(retest_frame(current_session(dataset_key))), "retest.csv")
