"""Overview: sites x metals, worst status over the period or the latest campaign's, with counts,
exceedance dates and trend arrows."""

import dash
from dash import ClientsideFunction, Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_filter_options, register_url_state
from dashboard.render.components import filter_controls, page_header, status_legend
from dashboard.render.grid import Column, client_grid
from dashboard.render.matrix import cell_rows, matrix_table, status_badges
from dashboard.state.store import current_session
from dashboard.views.matrix import Filters, cached_cell_table
from dashboard.views.trends import cell_trends, start_trend_table
from dashboard.views.url_state import as_choice, shared_filters

dash.register_page(__name__, path="/", name="Overview", order=0, title="tracescreen · overview")
callbacks = PageCallbacks()

VIEWS = {"worst": "worst over the period", "latest": "latest campaign"}
TABLE_COLUMNS = [
    Column("site_id", "Site", pinned=True, width=115), Column("site_name", "Site name", width=200),
    Column("analyte", "Metal", pinned=True, width=110), Column("fractions", "Fractions", width=130),
    Column("n_results", "Results", "number", width=100, digits=9),
    Column("n_exceeds", "Above a limit", "number", width=120, digits=9),
    Column("worst", "Worst over the period", "status", width=250),
    Column("latest_campaign", "Latest campaign", width=140), Column("latest", "Latest campaign's status", "status"),
    Column("first_exceedance", "First exceedance", "date", width=140),
    Column("last_exceedance", "Last exceedance", "date", width=140), Column("trend", "Trend", "words", width=260),
]


def layout(**query):
    values = shared_filters(query)
    view = as_choice(query.get("view"), VIEWS, "worst")
    return html.Div([
        page_header("Overview", "The status of every site and metal. Each cell: status shape and words, then "
                    "results above a limit / all results; the small shape after the counts is the other "
                    "view's status; an arrow is the trend (↑ increasing, ↓ decreasing, → no significant "
                    "trend; t / d for total and dissolved). Hover a cell for the latest campaign, the first and "
                    "last exceedance and the trend; click it to open that site and metal with these filters."),
        dcc.Store(id="ov-url"),
        filter_controls("ov", values),
        html.Div([html.Span("Cells show the status ", className="view-label", id="ov-view-label"),
                  dcc.RadioItems(id="ov-view", value=view, inline=True,
                                 options=[{"label": f" {w} ", "value": k} for k, w in VIEWS.items()])],
                 className="view-toggle", role="group", **{"aria-labelledby": "ov-view-label"}),
        dcc.Loading(html.Div(id="ov-totals"), type="dot", delay_show=300),
        status_legend(),
        html.A("Skip past the table of sites and metals", href="#ov-after-matrix", className="skip-link"),
        # the matrix arrives as HTML text in the store; assets/matrix.js puts it in the div
        dcc.Store(id="ov-matrix-html"),
        html.Div(id="ov-matrix", className="matrix-wrap"),
        html.Div(id="ov-after-matrix", tabIndex="-1"),
        html.P(id="ov-trend-note", className="count-text"),
        dcc.Interval(id="ov-trend-poll", interval=2500, disabled=False),
        dcc.Store(id="ov-trends-ready"),
        html.Button("Show the table as data (one row per site and metal)", id="ov-table-btn", className="button",
                    **{"aria-expanded": "false", "aria-controls": "ov-table"}),
        html.Div(id="ov-table", className="data-table-view"),
    ])


register_filter_options(callbacks, "ov")


def render_overview(session, uses, tables, fraction, start, end, campaigns, view="worst", trends_ready=False):
    """Totals badges and the matrix for a session, the filter values and the view (plain function)."""
    filters = Filters.from_controls(uses, tables, fraction, start, end, campaigns)
    trends = cell_trends(session)

    def render():
        cells = cached_cell_table(session, filters)
        badges = status_badges(cells.latest_totals if view == "latest" else cells.totals)
        return badges, matrix_table(session, cells, filters, view, trends)

    return session.cached("overview_view", (filters, view, trends is not None), render)


@callbacks.callback(
    Output("ov-totals", "children"), Output("ov-matrix-html", "data"),
    Input("dataset-key", "data"), Input("ov-uses", "value"), Input("ov-tables", "value"),
    Input("ov-fraction", "value"), Input("ov-dates", "start_date"), Input("ov-dates", "end_date"),
    Input("ov-campaigns", "value"), Input("ov-view", "value"), Input("ov-trends-ready", "data"),
)
def update_overview(dataset_key, uses, tables, fraction, start, end, campaigns, view="worst", trends_ready=None):
    return render_overview(current_session(dataset_key), uses, tables, fraction, start, end, campaigns, view)


@callbacks.callback(
    Output("ov-trends-ready", "data"), Output("ov-trend-poll", "disabled"), Output("ov-trend-note", "children"),
    Input("ov-trend-poll", "n_intervals"), State("dataset-key", "data"),
)
def poll_trends(_n, dataset_key):
    """Trend arrows appear when the session's trend table is computed (a worker thread at start)."""
    session = current_session(dataset_key)
    if session.ready("trends"):
        return True, True, ("Trends: Mann-Kendall or seasonal Kendall test over each series' whole record "
                            "(not only the dates filtered), 5 % significance; details on the Trends page.")
    start_trend_table(session)
    return dash.no_update, False, "Trend arrows appear when the trend tests are done (computing now) ..."


@callbacks.callback(
    Output("ov-table", "children"), Output("ov-table-btn", "children"), Output("ov-table-btn", "aria-expanded"),
    Input("ov-table-btn", "n_clicks"), Input("dataset-key", "data"), Input("ov-uses", "value"),
    Input("ov-tables", "value"), Input("ov-fraction", "value"), Input("ov-dates", "start_date"),
    Input("ov-dates", "end_date"), Input("ov-campaigns", "value"), Input("ov-trends-ready", "data"),
    prevent_initial_call=True,
)
def show_table(n_clicks, dataset_key, uses, tables, fraction, start, end, campaigns, _ready):
    if not n_clicks or n_clicks % 2 == 0:
        return "", "Show the table as data (one row per site and metal)", "false"
    session = current_session(dataset_key)
    filters = Filters.from_controls(uses, tables, fraction, start, end, campaigns)
    rows = cell_rows(session, cached_cell_table(session, filters), cell_trends(session))
    return (client_grid("ov-table-grid", TABLE_COLUMNS, rows, page_size=25),
            "Hide the table as data", "true")


callbacks.clientside_callback(ClientsideFunction("tracescreen", "showMatrix"), Output("ov-matrix", "className"),
                              Input("ov-matrix-html", "data"))
register_url_state(callbacks, "/", "ov-url", [
    ("uses", "ov-uses", "value", "list", None), ("tables", "ov-tables", "value", "list", None),
    ("fraction", "ov-fraction", "value", "text", "all"), ("start", "ov-dates", "start_date", "date", None),
    ("end", "ov-dates", "end_date", "date", None), ("campaigns", "ov-campaigns", "value", "list", None),
    ("view", "ov-view", "value", "text", "worst"),
], shared=True)
