"""Upload: drop a lab file (and optionally a column mapping), say how to read it, check it, then add it."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_url_state
from dashboard.render.components import page_header
from dashboard.render.uploads import add_upload_view, upload_preview_view
from dashboard.state.store import current_session, current_store
from dashboard.views.uploads import human_size
from dashboard.views.url_state import as_choice, as_text

dash.register_page(__name__, path="/upload", name="Upload", order=7, title="tracescreen · upload")
callbacks = PageCallbacks()

DATE_ORDERS = {"iso": "year-month-day only (2021-03-04)", "dmy": "day/month/year (04/03/2021 = 4 March)",
               "mdy": "month/day/year (03/04/2021 = 4 March)"}
FRACTIONS = {"": "the file must say", "total": "total", "dissolved": "dissolved"}
ENCODINGS = {"utf-8": "UTF-8", "latin-1": "Latin-1 (ISO 8859-1)", "cp1252": "Windows-1252", "utf-16": "UTF-16"}


def _option(label, control, html_for):
    return html.Div([html.Label(label, htmlFor=html_for), control], className="filter")


def layout(decimal_comma=None, date_order=None, fraction=None, sheet=None, encoding=None, **_query):
    cap = current_store().max_upload_bytes
    base = current_store().base_inputs().options
    drop = {"className": "dropzone", "className_active": "dropzone active",
            "className_reject": "dropzone reject"}
    order = as_choice(date_order, DATE_ORDERS, getattr(base, "date_order", "iso") or "iso")
    return html.Div([
        page_header("Upload", f"Drop a lab results file (CSV or XLSX, up to {human_size(cap)}) and, if "
                    "its headers are unusual, a column-mapping YAML file. You see the rows as tracescreen reads "
                    "them, which results are new, already in the data or revise earlier ones, and every rejected "
                    "row with its reason, before anything joins this session's data. A file already in the data "
                    "is refused. Uploads last for this browser session only."),
        dcc.Store(id="up-url"),
        dcc.Store(id="up-cap", data=cap),
        dcc.Store(id="up-file"),
        dcc.Store(id="up-mapping"),
        dcc.Store(id="up-token"),
        html.Fieldset([
            html.Legend("How to read the file"),
            html.Div([
                _option("Decimal comma", dcc.Checklist(id="up-decimal-comma", value=["yes"] if decimal_comma == "yes" else [],
                                                       options=[{"label": " numbers are written 0,5", "value": "yes"}]),
                        "up-decimal-comma"),
                _option("Date order", dcc.Dropdown(id="up-date-order", value=order, clearable=False,
                                                   options=[{"label": w, "value": k} for k, w in DATE_ORDERS.items()]),
                        "up-date-order"),
                _option("Fraction when the file does not say",
                        dcc.Dropdown(id="up-fraction", value=as_choice(fraction, FRACTIONS, ""), clearable=False,
                                     options=[{"label": w, "value": k} for k, w in FRACTIONS.items()]), "up-fraction"),
                _option("Sheet (workbooks; empty: every sheet with results)",
                        dcc.Input(id="up-sheet", type="text", value=as_text(sheet, ""), debounce=True,
                                  placeholder="every sheet"), "up-sheet"),
                _option("Text encoding", dcc.Dropdown(id="up-encoding", value=as_choice(encoding, ENCODINGS, "utf-8"),
                                                      clearable=False,
                                                      options=[{"label": w, "value": k} for k, w in ENCODINGS.items()]),
                        "up-encoding"),
            ], className="filters"),
        ], className="upload-options"),
        html.Div([
            dcc.Upload(id="up-results", children=html.Div(["Lab results: drop a CSV/XLSX file here or ",
                                                           html.U("choose one")]),
                       accept=".csv,.xlsx", **drop),
            dcc.Upload(id="up-columns", children=html.Div(["Column mapping (optional): drop a YAML "
                                                           "file here or ", html.U("choose one")]),
                       accept=".yaml,.yml", **drop),
        ], className="uploads"),
        html.Div(id="up-size-message", className="error", role="alert"),
        html.Div(id="up-mapping-name", className="count-text"),
        dcc.Loading(html.Div(id="up-preview"), type="dot", delay_show=200),
        html.Button("Add to this session's data", id="up-add", className="button", disabled=True),
        html.Div(id="up-added"),
    ])


# the size cap is checked in the browser first, so an oversized file is never sent; a new file
# clears the message of the previous one
callbacks.clientside_callback(
    """
    function(contents, filename, modified, cap) {
        if (!contents) { return [window.dash_clientside.no_update, "", window.dash_clientside.no_update]; }
        var bytes = Math.floor((contents.length - contents.indexOf(",") - 1) * 3 / 4);
        if (bytes > cap) {
            var mb = function(n) { return (n / 1e6).toFixed(1) + " MB"; };
            return [null, filename + " is about " + mb(bytes) + "; uploads are limited to " + mb(cap)
                    + ". Split the file, or ask for the dashboard to be started with it.", ""];
        }
        return [{contents: contents, filename: filename}, "", ""];
    }
    """,
    Output("up-file", "data"), Output("up-size-message", "children"), Output("up-added", "children"),
    Input("up-results", "contents"), Input("up-results", "filename"), Input("up-results", "last_modified"),
    State("up-cap", "data"),
)

callbacks.clientside_callback(
    """
    function(contents, filename, cap) {
        if (!contents) { return [window.dash_clientside.no_update, ""]; }
        if (contents.length * 3 / 4 > cap) { return [null, filename + " is too large for a column mapping."]; }
        return [{contents: contents, filename: filename}, "Column mapping: " + filename];
    }
    """,
    Output("up-mapping", "data"), Output("up-mapping-name", "children"),
    Input("up-columns", "contents"), State("up-columns", "filename"), State("up-cap", "data"),
)


def reading_options(decimal_comma, date_order, fraction, sheet, encoding) -> dict:
    """The page's reading options as the engine's LoadOptions fields."""
    return {"decimal_comma": bool(decimal_comma), "date_order": date_order or "iso",
            "default_fraction": fraction or None, "sheet": (sheet or "").strip() or None,
            "encoding": encoding or "utf-8"}


@callbacks.callback(
    Output("up-preview", "children"), Output("up-token", "data"), Output("up-add", "disabled"),
    Input("up-file", "data"), Input("up-mapping", "data"), Input("up-decimal-comma", "value"),
    Input("up-date-order", "value"), Input("up-fraction", "value"), Input("up-sheet", "value"),
    Input("up-encoding", "value"), State("dataset-key", "data"),
    prevent_initial_call=True,
)
def preview(file, mapping, decimal_comma, date_order, fraction, sheet, encoding, dataset_key):
    return upload_preview_view(current_store(), file, mapping,
                               reading_options(decimal_comma, date_order, fraction, sheet, encoding), dataset_key)


@callbacks.callback(
    Output("dataset-key", "data"), Output("up-added", "children", allow_duplicate=True),
    Output("up-add", "disabled", allow_duplicate=True),
    Input("up-add", "n_clicks"), State("up-token", "data"), State("dataset-key", "data"),
    prevent_initial_call=True,
)
def add_to_session(n_clicks, token, dataset_key):
    if not n_clicks:
        return dash.no_update, dash.no_update, dash.no_update
    key, message = add_upload_view(current_session, token, dataset_key)
    return key, message, True


register_url_state(callbacks, "/upload", "up-url", [
    ("decimal_comma", "up-decimal-comma", "value", "list", None), ("date_order", "up-date-order", "value", "text", "iso"),
    ("fraction", "up-fraction", "value", "text", ""), ("sheet", "up-sheet", "value", "text", ""),
    ("encoding", "up-encoding", "value", "text", "utf-8"),
])
