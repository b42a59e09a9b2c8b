"""Data quality: rows read, accepted and rejected per file; every rejected row with its reason."""

import dash
from dash import Input, Output, callback, html

from dashboard.components import data_table, page_header
from dashboard.data import current_session
from dashboard.quality import file_table, reason_table, rejected_frame
from dashboard.tables import table_page

dash.register_page(__name__, path="/quality", name="Data quality", order=5,
                   title="tracescreen · data quality")
PAGE_SIZE = 20


def layout(**_query):
    return html.Div([
        page_header("Data quality", "Nothing is dropped silently: every row of every file is either "
                    "accepted or listed here with the reason it could not be used (rows read = "
                    "accepted + rejected)."),
        html.H3("Rows per file"),
        html.Div(id="dq-files"),
        html.H3("Rejections by reason"),
        html.Div(id="dq-reasons"),
        html.H3("Rejected rows"),
        html.Span(id="dq-count", className="count-text"),
        html.Div(id="dq-error", className="error", role="alert"),
        data_table("dq-table", ["file", "sheet", "row", "reason"], page_size=PAGE_SIZE),
    ])


@callback(
    Output("dq-files", "children"), Output("dq-reasons", "children"), Output("dq-table", "columns"),
    Input("dataset-key", "data"),
)
def update_quality_summary(dataset_key):
    session = current_session(dataset_key)
    frame = rejected_frame(session)
    return file_table(session), reason_table(session), [{"name": c, "id": c} for c in frame.columns]


@callback(
    Output("dq-table", "data"), Output("dq-table", "page_count"), Output("dq-count", "children"),
    Output("dq-error", "children"), Output("dq-table", "tooltip_data"),
    Input("dataset-key", "data"), Input("dq-table", "page_current"), Input("dq-table", "page_size"),
    Input("dq-table", "sort_by"), Input("dq-table", "filter_query"),
)
def update_rejected_table(dataset_key, page_current, page_size, sort_by, filter_query):
    frame = rejected_frame(current_session(dataset_key))
    return table_page(frame, page_current, page_size or PAGE_SIZE, sort_by, filter_query)
