"""Wells against background and standards (US EPA Unified Guidance 2009): one compliance well and
constituent at a time -- its background, prediction limit and retest sequence, control chart, the
limit's inputs and its confidence limits against standards -- with the statistical design stated."""

import dash
from dash import Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks, register_url_state
from dashboard.render.components import page_header
from dashboard.render.grid import Column, client_grid
from dashboard.state.store import current_session
from dashboard.views.url_state import as_text
from dashboard.views.wells import CI_COLUMNS, SEQUENCE_COLUMNS, series_options, series_view, wells_tables
from tracescreen.report.charts import PLOTLY_CONFIG

dash.register_page(__name__, path="/wells", name="Wells", order=2.5, title="tracescreen · wells against background")
callbacks = PageCallbacks()

INTRO = ("Each compliance well is compared with background -- up-gradient wells, or the well's own "
         "history -- with prediction limits designed for a site-wide false positive rate, and an "
         "exceedance counts only once resampling confirms it; the well's confidence limits are compared "
         "with the standards. Statistical tests support, and do not replace, the regulator's decision.")


def _table(table_id: str, columns: list[str]):
    """A grid of one of the well's tables (rows filled by the callback)."""
    return client_grid(table_id, [Column(c, c.replace("_", " "), "words" if c in ("note", "ci_notes", "value") else "text",
                                         width=300 if c in ("note", "ci_notes", "value") else 150) for c in columns],
                       [], page_size=12)


def layout(series=None, **_query):
    series = as_text(series)
    session = current_session(None)
    tables = wells_tables(session)
    if tables is None:
        return html.Div([page_header("Wells against background", INTRO),
                         html.P(["No monitoring network was given. Start the dashboard with ",
                                 html.Code("--network network.csv"), " (and ", html.Code("--design design.yaml"),
                                 ") to compare wells with background; see README, 'Wells against background'."],
                                id="wells-missing")])
    options = series_options(tables)
    value = series if series in {o["value"] for o in options} else (options[0]["value"] if options else None)
    design = tables["design_statement"]
    return html.Div([
        page_header("Wells against background", INTRO),
        html.Details([html.Summary("Statistical design"),
                      html.Dl([x for t, s in zip(design["topic"], design["statement"])
                               for x in (html.Dt(t), html.Dd(s))], id="wells-design")], open=False),
        html.Div([html.Div([html.Label("Well and constituent", htmlFor="wells-series"),
                            dcc.Dropdown(id="wells-series", options=options, value=value, clearable=False)],
                           className="filter wide")], className="filters"),
        html.P(id="wells-status", className="summary", role="status"),
        dcc.Store(id="wells-url"),
        dcc.Loading(dcc.Graph(id="wells-chart", config=PLOTLY_CONFIG), type="dot", delay_show=300),
        html.H3("The limit and its inputs"), _table("wells-facts", ["setting", "value"]),
        html.H3("Retest sequence"), _table("wells-sequence", SEQUENCE_COLUMNS),
        html.H3("Confidence limits against standards"), _table("wells-confidence", CI_COLUMNS),
    ])


@callbacks.callback(Output("wells-series", "options"), Input("dataset-key", "data"))
def update_series_options(dataset_key):
    tables = wells_tables(current_session(dataset_key))
    return series_options(tables) if tables is not None else []


@callbacks.callback(
    Output("wells-chart", "figure"), Output("wells-status", "children"), Output("wells-facts", "rowData"),
    Output("wells-sequence", "rowData"), Output("wells-confidence", "rowData"),
    Input("wells-series", "value"), Input("dataset-key", "data"),
)
def update_series(value, dataset_key):
    tables = wells_tables(current_session(dataset_key))
    if tables is None or not value:
        return {}, "Choose a well and constituent.", [], [], []
    v = series_view(tables, value)
    return v["figure"], v["status"], v["facts"], v["sequence"], v["confidence"]


register_url_state(callbacks, "/wells", "wells-url", [("series", "wells-series", "value", "text", None)])
