"""Trends: where every series is heading (the engine's trend table), with the date the trend line
would reach the lowest limit, and a link to each series' chart."""

import dash
import pandas as pd
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import (
    PageCallbacks,
    register_download_query,
    register_server_grid,
    register_url_state,
    rows_on_screen,
)
from dashboard.render.components import page_header
from dashboard.render.grid import FILTER_HELP, Column, grid_toolbar, server_grid
from dashboard.state.store import current_session
from dashboard.views.grid_query import FilterError
from dashboard.views.links import chart_links
from dashboard.views.tables import to_csv_bytes
from dashboard.views.trends import ALPHA, CROSSING_CAUTION, start_trend_table, trend_rows
from dashboard.views.url_state import grid_models
from tracescreen.statistics.trends import TABLE_COLUMNS

dash.register_page(__name__, path="/trends", name="Trends", order=2.3, title="tracescreen · trends")
callbacks = PageCallbacks()
PAGE_SIZE = 25
COLUMNS = [
    Column("site_id", "Site", pinned=True, width=115), Column("analyte", "Metal", pinned=True, width=110),
    Column("fraction", "Fraction", pinned=True, width=100),
    Column("chart", "Chart", "link", pinned=True, width=75), Column("site_name", "Site name", width=200, hidden=True),
    Column("direction_words", "Direction", width=190), Column("evidence", "Evidence of a trend", "words", width=280),
    Column("slope_per_year", "Slope [µg/L per year]", "number", width=170, digits=3),
    Column("slope_low", f"Slope, {1 - ALPHA:.0%} interval from", "number", width=190, digits=3),
    Column("slope_high", "to", "number", width=100, digits=3),
    Column("p_value", "p-value", "number", width=130, digits=2),
    Column("lowest_limit_ug_L", "Lowest limit [µg/L]", "number", width=160),
    Column("lowest_limit_table", "Its table", width=170),
    Column("crosses_limit_on", "Trend line reaches it around", "date", width=210),
    Column("n", "Results", "number", width=100, digits=9), Column("n_nondetect", "Non-detects", "number", width=120, digits=9),
    Column("first_sampled", "First sampled", "date", width=130), Column("last_sampled", "Last sampled", "date", width=130),
    Column("test", "Test", width=200), Column("note", "Notes", "words", width=360),
]

#: the series heading soonest for their limit first, then the strongest evidence of a trend
DEFAULT_SORT = [{"colId": "crosses_limit_on", "sort": "asc"}, {"colId": "p_value", "sort": "asc"}]


def _frame(session) -> pd.DataFrame:
    rows = trend_rows(session)
    if rows is None:
        return pd.DataFrame({c.field: pd.Series(dtype=object) for c in COLUMNS if c.field != "chart"})
    return rows


def layout(**query):
    filter_model, sort_model = grid_models(query, "tr")
    return html.Div([
        page_header("Trends", "Where each series (site, metal, fraction) is heading: the Mann-Kendall test, or the "
                    "seasonal Kendall test where sampling follows the seasons, with the Sen slope (Akritas-Theil-Sen "
                    f"with non-detects) and its {1 - ALPHA:.0%} interval, over each series' whole record. The "
                    f"direction is decided at {ALPHA:.0%} significance. " + FILTER_HELP),
        html.P([html.Strong("Caution. "), CROSSING_CAUTION, " The responsible authority decides what a trend means "
                "for compliance."], className="caution-inline", id="tr-caution"),
        dcc.Store(id="tr-url"),
        dcc.Interval(id="tr-poll", interval=2500),
        html.P(id="tr-waiting", className="count-text", role="status"),
        grid_toolbar("tr", "tr-grid", COLUMNS, [html.Button("Download CSV", id="tr-csv-btn", className="button")]),
        html.Div(id="tr-error", className="error", role="alert"),
        dcc.Store(id="tr-query", data={"filterModel": filter_model, "sortModel": sort_model}), dcc.Store(id="tr-shown"),
        dcc.Loading(html.Div(server_grid("tr-grid", COLUMNS, PAGE_SIZE, filter_model=filter_model,
                                         sort_model=sort_model or DEFAULT_SORT),
                             id="tr-grid-box"), type="dot", delay_show=300),
        dcc.Download(id="tr-download"),
    ])


register_server_grid(callbacks, "tr", "tr-grid", COLUMNS, _frame, extra=chart_links)


@callbacks.callback(
    Output("tr-waiting", "children"), Output("tr-poll", "disabled"), Output("tr-grid-box", "children"),
    Input("tr-poll", "n_intervals"), State("dataset-key", "data"), State("tr-query", "data"),
)
def wait_for_trends(n, dataset_key, query):
    """While the trend table is computed (a worker thread), say so; then draw the grid once."""
    session = current_session(dataset_key)
    if trend_rows(session) is not None:
        query = query or {}
        grid = server_grid("tr-grid", COLUMNS, PAGE_SIZE, filter_model=query.get("filterModel"),
                           sort_model=query.get("sortModel") or DEFAULT_SORT) if n else dash.no_update
        return "", True, grid
    start_trend_table(session)
    return "The trend tests are being computed for every series (about a minute for a million results) ...", False, \
        dash.no_update


register_download_query(callbacks, "tr", "tr-grid", ["tr-csv-btn"])


@callbacks.callback(Output("tr-download", "data"), Output("tr-error", "children", allow_duplicate=True),
                    Input("tr-shown", "data"), State("dataset-key", "data"), prevent_initial_call=True)
def download_trends(query_data, dataset_key):
    try:
        rows = rows_on_screen(current_session(dataset_key), "tr", _frame, query_data, COLUMNS)
    except FilterError as exc:
        return dash.no_update, f"Nothing downloaded: the filter could not be applied ({exc})."
    return dcc.send_bytes(to_csv_bytes(rows[[c for c in TABLE_COLUMNS if c in rows.columns]]), "trends.csv"), ""


register_url_state(callbacks, "/trends", "tr-url", [("tr", "tr-query", "data", "grid", None)])
