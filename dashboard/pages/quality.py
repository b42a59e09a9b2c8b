"""Data quality: rows read, accepted, set aside and rejected per file; every row not accepted with
its reason."""

import dash
from dash import Input, Output, html

from dashboard.pages._shared import PageCallbacks, register_server_table
from dashboard.render.components import data_table, page_header
from dashboard.render.quality import file_table, reason_table, set_aside_table
from dashboard.state.store import current_session
from dashboard.views.quality import rejected_frame, set_aside_frame

dash.register_page(__name__, path="/quality", name="Data quality", order=5,
                   title="tracescreen · data quality")
callbacks = PageCallbacks()
PAGE_SIZE = 20


def layout(**_query):
    return html.Div([
        page_header("Data quality", "Nothing is dropped silently: every row of every file is "
                    "accepted, set aside (not a result to screen: laboratory QC, reference material, "
                    "analytes tracescreen does not screen, results qualified unusable) or rejected "
                    "with the reason it could not be used (rows read = accepted + set aside + rejected)."),
        html.H3("Rows per file"),
        html.Div(id="dq-files"),
        html.H3("Rejections by reason"),
        html.Div(id="dq-reasons"),
        html.H3("Rejected rows"),
        html.Span(id="dq-count", className="count-text"),
        html.Div(id="dq-error", className="error", role="alert"),
        data_table("dq-table", ["file", "sheet", "row", "reason"], page_size=PAGE_SIZE),
        html.H3("Set aside, not screened, by kind"),
        html.Div(id="dq-aside-kinds"),
        html.H3("Rows set aside"),
        html.Span(id="dq-aside-count", className="count-text"),
        html.Div(id="dq-aside-error", className="error", role="alert"),
        data_table("dq-aside-table", ["file", "sheet", "row", "reason"], page_size=PAGE_SIZE),
    ])


@callbacks.callback(
    Output("dq-files", "children"), Output("dq-reasons", "children"), Output("dq-table", "columns"),
    Output("dq-aside-kinds", "children"), Output("dq-aside-table", "columns"),
    Input("dataset-key", "data"),
)
def update_quality_summary(dataset_key):
    session = current_session(dataset_key)
    frame, aside = rejected_frame(session), set_aside_frame(session)
    return (file_table(session), reason_table(session), [{"name": c, "id": c} for c in frame.columns],
            set_aside_table(session), [{"name": c, "id": c} for c in aside.columns])


register_server_table(callbacks, "dq", rejected_frame, PAGE_SIZE)
register_server_table(callbacks, "dq-aside", set_aside_frame, PAGE_SIZE)
