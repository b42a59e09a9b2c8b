"""Retest request: the retest list as the request a reviewer sends, one line per sample grouped by
laboratory and batch, reanalysis apart from resampling; selected lines exported (XLSX, CSV) and each
line's status kept (in the workspace when there is one)."""

import dash
import pandas as pd
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_server_grid, register_url_state
from dashboard.render.components import page_header
from dashboard.render.grid import FILTER_HELP, Column, client_grid, grid_toolbar, server_grid
from dashboard.render.quality import html_table
from dashboard.state.store import current_session, current_store
from dashboard.views.links import chart_links
from dashboard.views.retest import batch_summary, export_frame, reason_totals, request_frame, retest_frame
from dashboard.views.tables import to_csv_bytes, to_xlsx_bytes
from dashboard.views.url_state import as_text, grid_models

dash.register_page(__name__, path="/retest", name="Retest request", order=4,
                   title="tracescreen · retest request")
callbacks = PageCallbacks()
PAGE_SIZE = 25
COLUMNS = [
    Column("lab", "Laboratory", pinned=True, width=170), Column("batch", "Batch", pinned=True, width=120),
    Column("site_id", "Site", width=115), Column("sample_id", "Sample", width=120),
    Column("sampled_at", "Sampled", "date"), Column("analytes", "Metals", width=170),
    Column("action_words", "Asked for", width=190), Column("why_action", "Why", "words", width=300),
    Column("reasons", "Reasons", "words", width=360), Column("status_words", "Request status", width=210),
    Column("reason_codes", "Reason codes", width=200, hidden=True),
    Column("holding_time_ends", "Holding time ends", "date", width=150),
    Column("fractions", "Fractions", width=110, hidden=True), Column("details", "Details", "words", width=400, hidden=True),
    Column("origin", "From", width=200, hidden=True), Column("request_id", "Request id", width=170, hidden=True),
    Column("chart", "Chart", "link"),
]

BATCH_COLUMNS = [Column("laboratory", "Laboratory", pinned=True, width=220), Column("batch", "Batch", width=140),
                 Column("lines", "Lines", "number", digits=9, width=100),
                 Column("resample", "Resample", "number", digits=9, width=110),
                 Column("reanalyse", "Reanalyse", "number", digits=9, width=110),
                 Column("documents", "Documents", "number", digits=9, width=110),
                 Column("open", "Still open", "number", digits=9, width=110)]


def _frame(session, as_of):
    return request_frame(session, as_of, current_store().requests)


def _chart(frame):
    links = chart_links(frame.assign(analyte=frame["analytes"].astype(str).str.split("; ").str[0],
                                     fraction=frame["fractions"].astype(str).str.split("; ").str[0]))
    return links


def layout(as_of=None, **query):
    filter_model, sort_model = grid_models(query, "rq")
    day = as_text(as_of) or str(pd.Timestamp.now().date())
    store = current_store()
    return html.Div([
        page_header("Retest request", "The results a reviewer should send back for confirmation, as the request "
                    "to send: one line per sample, grouped by laboratory and batch, with its metals and reasons in "
                    "plain words (the codes in a column you can show). A line asks the laboratory to reanalyse the "
                    "sample it holds, or the field team to resample; a sample past its holding time on the request "
                    "date is to be resampled, since a reanalysis would not be valid. Tick lines and export them; "
                    "then record what came back. " + FILTER_HELP),
        dcc.Store(id="rq-url"),
        html.Div([
            html.Div([html.Label("Request date (holding times are judged on it)", htmlFor="rq-date"),
                      dcc.DatePickerSingle(id="rq-date", date=day, display_format="YYYY-MM-DD")], className="filter"),
        ], className="filters"),
        html.P(f"Request statuses are kept {store.requests.kept}.", className="count-text", id="rq-kept"),
        html.H3("By laboratory and batch"),
        dcc.Loading(html.Div(id="rq-batches"), type="dot", delay_show=300),
        html.H3("Request lines"),
        grid_toolbar("rq", "rq-grid", COLUMNS, [
            html.Button("Export selected (XLSX)", id="rq-xlsx-btn", className="button"),
            html.Button("Export selected (CSV)", id="rq-csv-btn", className="button"),
            dcc.Checklist(id="rq-mark-sent", value=["yes"], options=[{"label": " mark exported lines as requested",
                                                                      "value": "yes"}], className="inline-check"),
        ]),
        html.Div([html.Span("Record for the selected lines: ", className="count-text"),
                  html.Button("requested", id="rq-set-requested", className="button small"),
                  html.Button("confirmed by the retest", id="rq-set-confirmed", className="button small"),
                  html.Button("not confirmed by the retest", id="rq-set-not_confirmed", className="button small")],
                 className="toolbar"),
        html.Div(id="rq-message", role="status"),
        html.Div(id="rq-error", className="error", role="alert"),
        dcc.Store(id="rq-query", data={"filterModel": filter_model, "sortModel": sort_model}),
        dcc.Store(id="rq-version"),
        server_grid("rq-grid", COLUMNS, PAGE_SIZE, filter_model=filter_model,
                    sort_model=sort_model or [{"colId": "lab", "sort": "asc"}, {"colId": "batch", "sort": "asc"}],
                    selectable=True, row_id="request_id"),
        html.H3("Retest list: results and reasons"),
        html.Div(id="rq-reasons"),
        html.Button("Download the retest list (CSV, one row per result and reason)", id="rq-list-btn",
                    className="button"),
        dcc.Download(id="rq-download"),
    ])


register_server_grid(callbacks, "rq", "rq-grid", COLUMNS, _frame, extra=_chart, states=(State("rq-date", "date"),))


@callbacks.callback(Output("rq-batches", "children"), Output("rq-reasons", "children"),
                    Input("dataset-key", "data"), Input("rq-date", "date"), Input("rq-version", "data"))
def update_request_summary(dataset_key, as_of, _version):
    session = current_session(dataset_key)
    frame = _frame(session, as_of)
    summary = batch_summary(frame)
    batches = client_grid("rq-batches-table", BATCH_COLUMNS, summary.to_dict("records"), page_size=8) if len(frame) \
        else html.P("Nothing to retest.")
    return batches, html_table(reason_totals(retest_frame(session)), "rq-reasons-table")


def _selected_ids(selected) -> list[str]:
    return [str(r.get("request_id")) for r in (selected or []) if r and r.get("request_id")]


@callbacks.callback(
    Output("rq-download", "data"), Output("rq-message", "children"), Output("rq-version", "data"),
    Input("rq-xlsx-btn", "n_clicks"), Input("rq-csv-btn", "n_clicks"), Input("rq-list-btn", "n_clicks"),
    State("rq-grid", "selectedRows"), State("rq-mark-sent", "value"), State("dataset-key", "data"),
    State("rq-date", "date"), prevent_initial_call=True,
)
def export_request(_x, _c, _l, selected, mark, dataset_key, as_of):
    session = current_session(dataset_key)
    if dash.ctx.triggered_id == "rq-list-btn":
        return dcc.send_bytes(to_csv_bytes(retest_frame(session)), "retest.csv"), "", dash.no_update
    ids = _selected_ids(selected)
    if not ids:
        return dash.no_update, html.P("Tick the lines to export first (the boxes at the left of the table).",
                                      className="error"), dash.no_update
    frame = _frame(session, as_of)
    chosen = frame[frame["request_id"].isin(ids)]
    note = ""
    if mark:
        current_store().requests.record(chosen[chosen["origin"] == "this data"], "requested")
        frame = _frame(session, as_of)
        note = " and recorded as requested"
    rows = export_frame(frame, ids)
    if dash.ctx.triggered_id == "rq-xlsx-btn":
        payload = dcc.send_bytes(to_xlsx_bytes(rows, sheet="retest request"), "retest_request.xlsx")
    else:
        payload = dcc.send_bytes(to_csv_bytes(rows), "retest_request.csv")
    return payload, html.P(f"{len(rows)} request lines exported{note}.", className="ok", id="rq-exported"), \
        frame.attrs.get("version")


@callbacks.callback(
    Output("rq-message", "children", allow_duplicate=True), Output("rq-version", "data", allow_duplicate=True),
    Input("rq-set-requested", "n_clicks"), Input("rq-set-confirmed", "n_clicks"),
    Input("rq-set-not_confirmed", "n_clicks"), State("rq-grid", "selectedRows"), State("dataset-key", "data"),
    State("rq-date", "date"), prevent_initial_call=True,
)
def set_status(_r, _c, _n, selected, dataset_key, as_of):
    status = str(dash.ctx.triggered_id).removeprefix("rq-set-")
    ids = _selected_ids(selected)
    if not ids:
        return html.P("Tick the lines first (the boxes at the left of the table).", className="error"), dash.no_update
    book = current_store().requests
    frame = _frame(current_session(dataset_key), as_of)
    chosen = frame[frame["request_id"].isin(ids)]
    book.record(chosen[chosen["status"] == ""], "requested")  # a line recorded before it was sent is sent now
    n = book.set_status(ids, status)
    frame = _frame(current_session(dataset_key), as_of)
    words = {"requested": "requested", "confirmed": "confirmed by the retest", "not_confirmed": "not confirmed by the retest"}
    return html.P(f"{n} lines recorded as {words[status]}.", className="ok", id="rq-recorded"), frame.attrs.get("version")


# a recorded status: the grid asks for its rows again (and keeps the page it shows)
callbacks.clientside_callback(
    """function(version) {
        var api = window.dash_ag_grid && window.dash_ag_grid.getApi ? window.dash_ag_grid.getApi("rq-grid") : null;
        if (api && version) { api.refreshInfiniteCache(); api.deselectAll(); }
        return window.dash_clientside.no_update;
    }""",
    Output("rq-kept", "title"), Input("rq-version", "data"), prevent_initial_call=True,
)

register_url_state(callbacks, "/retest", "rq-url", [("rq", "rq-query", "data", "grid", None),
                                                    ("as_of", "rq-date", "date", "date", None)])
