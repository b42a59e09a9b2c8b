"""Upload: drop a lab file (and optionally a column mapping), check it, then add it to the session."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks
from dashboard.render.components import page_header
from dashboard.render.uploads import add_upload_view, upload_preview_view
from dashboard.state.store import current_session, current_store
from dashboard.views.uploads import human_size

dash.register_page(__name__, path="/upload", name="Upload", order=7, title="tracescreen · upload")
callbacks = PageCallbacks()


def layout(**_query):
    cap = current_store().max_upload_bytes
    drop = {"className": "dropzone", "className_active": "dropzone active",
            "className_reject": "dropzone reject"}
    return html.Div([
        page_header("Upload", f"Drop a lab results file (CSV or XLSX, up to {human_size(cap)}) and, if "
                    "its headers are unusual, a column-mapping YAML file. You see what would be "
                    "accepted and every rejected row with its reason before anything joins this "
                    "session's data. Uploads last for this browser session only."),
        dcc.Store(id="up-cap", data=cap),
        dcc.Store(id="up-file"),
        dcc.Store(id="up-mapping"),
        dcc.Store(id="up-token"),
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
        dcc.Loading(html.Div(id="up-preview"), type="dot"),
        html.Button("Add to this session's data", id="up-add", className="button", disabled=True),
        html.Div(id="up-added", role="status"),
    ])


# the size cap is checked in the browser first, so an oversized file is never sent
callbacks.clientside_callback(
    """
    function(contents, filename, cap) {
        if (!contents) { return [window.dash_clientside.no_update, ""]; }
        var bytes = Math.floor((contents.length - contents.indexOf(",") - 1) * 3 / 4);
        if (bytes > cap) {
            var mb = function(n) { return (n / 1e6).toFixed(1) + " MB"; };
            return [null, filename + " is about " + mb(bytes) + "; uploads are limited to " + mb(cap)
                    + ". Split the file, or start the dashboard on it with --results."];
        }
        return [{contents: contents, filename: filename}, ""];
    }
    """,
    Output("up-file", "data"), Output("up-size-message", "children"),
    Input("up-results", "contents"), State("up-results", "filename"), State("up-cap", "data"),
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


@callbacks.callback(
    Output("up-preview", "children"), Output("up-token", "data"), Output("up-add", "disabled"),
    Input("up-file", "data"), Input("up-mapping", "data"),
    prevent_initial_call=True,
)
def preview(file, mapping):
    return upload_preview_view(current_store(), file, mapping)


@callbacks.callback(
    Output("dataset-key", "data"), Output("up-added", "children"),
    Input("up-add", "n_clicks"), State("up-token", "data"), State("dataset-key", "data"),
    prevent_initial_call=True,
)
def add_to_session(n_clicks, token, dataset_key):
    if not n_clicks:
        return dash.no_update, dash.no_update
    return add_upload_view(current_session, token, dataset_key)
