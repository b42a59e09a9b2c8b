"""Data quality: rows read, accepted, set aside and rejected per file; every row not accepted with
its reason."""

import dash
from dash import Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks, register_server_grid, register_url_state
from dashboard.render.components import page_header
from dashboard.render.grid import FILTER_HELP, Column, column_def, grid_toolbar, server_grid
from dashboard.render.quality import file_table, reason_table, set_aside_table
from dashboard.state.store import current_session
from dashboard.views.quality import rejected_frame, set_aside_frame
from dashboard.views.url_state import grid_models

dash.register_page(__name__, path="/quality", name="Data quality", order=5,
                   title="tracescreen · data quality")
callbacks = PageCallbacks()
PAGE_SIZE = 20
_FIRST = [Column("file", "File", pinned=True, width=200), Column("sheet", "Sheet", width=100),
          Column("row", "Row", "number", width=80, digits=9), Column("reason", "Reason", "words", width=420)]


def _columns(frame_for):
    """The fixed columns, then the file's own columns as they were read (text)."""
    def columns(session):
        frame = frame_for(session)
        fixed = {c.field for c in _FIRST}
        return _FIRST + [Column(c, c, width=130) for c in frame.columns if c not in fixed]
    return columns


REJECTED_COLUMNS = _columns(rejected_frame)
ASIDE_COLUMNS = _columns(set_aside_frame)


def layout(**query):
    rej_filter, rej_sort = grid_models(query, "dq")
    aside_filter, aside_sort = grid_models(query, "dqa")
    return html.Div([
        page_header("Data quality", "Nothing is dropped silently: every row of every file is "
                    "accepted, set aside (not a result to screen: laboratory QC, reference material, "
                    "analytes tracescreen does not screen, results qualified unusable) or rejected "
                    "with the reason it could not be used (rows read = accepted + set aside + rejected)."),
        dcc.Store(id="dq-url"),
        html.H3("Rows per file"),
        dcc.Loading(html.Div(id="dq-files"), type="dot", delay_show=300),
        html.H3("Rejections by reason"),
        html.Div(id="dq-reasons"),
        html.H3("Rejected rows"),
        html.P(FILTER_HELP, className="intro"),
        grid_toolbar("dq", "dq-grid", _FIRST, []),
        html.Div(id="dq-error", className="error", role="alert"),
        dcc.Store(id="dq-query", data={"filterModel": rej_filter, "sortModel": rej_sort}),
        server_grid("dq-grid", _FIRST, PAGE_SIZE, height=480, filter_model=rej_filter, sort_model=rej_sort),
        html.H3("Set aside, not screened, by kind"),
        html.Div(id="dq-aside-kinds"),
        html.H3("Rows set aside"),
        grid_toolbar("dqa", "dqa-grid", _FIRST, []),
        html.Div(id="dqa-error", className="error", role="alert"),
        dcc.Store(id="dqa-query", data={"filterModel": aside_filter, "sortModel": aside_sort}),
        server_grid("dqa-grid", _FIRST, PAGE_SIZE, height=480, filter_model=aside_filter, sort_model=aside_sort),
    ])


@callbacks.callback(
    Output("dq-files", "children"), Output("dq-reasons", "children"), Output("dq-grid", "columnDefs"),
    Output("dq-aside-kinds", "children"), Output("dqa-grid", "columnDefs"),
    Input("dataset-key", "data"),
)
def update_quality_summary(dataset_key):
    session = current_session(dataset_key)
    return (file_table(session), reason_table(session), [column_def(c) for c in REJECTED_COLUMNS(session)],
            set_aside_table(session), [column_def(c) for c in ASIDE_COLUMNS(session)])


register_server_grid(callbacks, "dq", "dq-grid", REJECTED_COLUMNS, rejected_frame)
register_server_grid(callbacks, "dqa", "dqa-grid", ASIDE_COLUMNS, set_aside_frame)
register_url_state(callbacks, "/quality", "dq-url", [("dq", "dq-query", "data", "grid", None),
                                                     ("dqa", "dqa-query", "data", "grid", None)])
