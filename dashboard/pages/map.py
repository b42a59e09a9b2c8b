"""Map: sites by latitude and longitude, shaped and coloured by worst status (no tile server);
the user's GeoJSON drawn under them; a click opens the site's chart."""

import dash
from dash import Input, Output, State, dcc, html

from dashboard.pages._shared import PageCallbacks, register_filter_options, register_url_state
from dashboard.render.components import filter_controls, page_header, status_legend
from dashboard.render.grid import Column, client_grid
from dashboard.render.map_figure import map_figure, map_rows
from dashboard.state.store import current_session, current_store
from dashboard.views.links import chart_href
from dashboard.views.matrix import Filters, cached_status_counts, site_worst
from dashboard.views.url_state import shared_filters
from tracescreen.report.charts import PLOTLY_CONFIG

dash.register_page(__name__, path="/map", name="Map", order=1, title="tracescreen · map")
callbacks = PageCallbacks()
TABLE_COLUMNS = [Column("site_id", "Site", pinned=True, width=115), Column("name", "Name", width=260),
                 Column("worst", "Worst status", "status"), Column("n_results", "Results", "number", digits=9),
                 Column("n_exceeds", "Above a limit", "number", digits=9), Column("latitude", "Latitude", width=130),
                 Column("longitude", "Longitude", width=130)]


def layout(**query):
    return html.Div([
        page_header("Map", "Monitoring sites at their coordinates, marked by the worst status of any "
                    "metal in the selected period. Drawn without map tiles, so it works offline; outlines and "
                    "lines are the GeoJSON files the dashboard was started with (--overlay). Click a site to open "
                    "its chart."),
        dcc.Store(id="mp-url"),
        dcc.Location(id="mp-go", refresh="callback-nav"),
        filter_controls("mp", shared_filters(query)),
        status_legend(),
        dcc.Loading(dcc.Graph(id="map-graph", config=PLOTLY_CONFIG), type="dot", delay_show=300),
        html.Button("Show the sites as a table", id="mp-table-btn", className="button",
                    **{"aria-expanded": "false", "aria-controls": "mp-table"}),
        html.Div(id="mp-table", className="data-table-view"),
    ])


register_filter_options(callbacks, "mp")


def _sites(dataset_key, uses, tables, fraction, start, end, campaigns):
    session = current_session(dataset_key)
    counts = cached_status_counts(session, Filters.from_controls(uses, tables, fraction, start, end, campaigns))
    return session, site_worst(session, counts), bool(counts.sum())


_FILTERS = [Input("dataset-key", "data"), Input("mp-uses", "value"), Input("mp-tables", "value"),
            Input("mp-fraction", "value"), Input("mp-dates", "start_date"), Input("mp-dates", "end_date"),
            Input("mp-campaigns", "value")]


@callbacks.callback(Output("map-graph", "figure"), *_FILTERS)
def update_map(dataset_key, uses, tables, fraction, start, end, campaigns):
    _, sites, any_results = _sites(dataset_key, uses, tables, fraction, start, end, campaigns)
    return map_figure(sites, current_store().overlays, any_results)


@callbacks.callback(Output("mp-go", "href"), Input("map-graph", "clickData"), State("mp-fraction", "value"),
                    prevent_initial_call=True)
def open_site(click, fraction):
    """A click on a site opens its chart (its first metal; the fraction of the map's filter)."""
    point = ((click or {}).get("points") or [{}])[0]
    custom = point.get("customdata")
    if not custom:
        return dash.no_update
    from dashboard.views.series import default_selection

    session = current_session(None)
    site, analyte, frac = default_selection(session, str(custom[0]), None, fraction if fraction != "all" else "all")
    return chart_href(site, analyte, frac)


@callbacks.callback(
    Output("mp-table", "children"), Output("mp-table-btn", "children"), Output("mp-table-btn", "aria-expanded"),
    Input("mp-table-btn", "n_clicks"), *_FILTERS, prevent_initial_call=True,
)
def show_map_table(n_clicks, dataset_key, uses, tables, fraction, start, end, campaigns):
    if not n_clicks or n_clicks % 2 == 0:
        return "", "Show the sites as a table", "false"
    _, sites, _ = _sites(dataset_key, uses, tables, fraction, start, end, campaigns)
    return client_grid("mp-table-grid", TABLE_COLUMNS, map_rows(sites)), "Hide the sites table", "true"


register_url_state(callbacks, "/map", "mp-url", [
    ("uses", "mp-uses", "value", "list", None), ("tables", "mp-tables", "value", "list", None),
    ("fraction", "mp-fraction", "value", "text", "all"), ("start", "mp-dates", "start_date", "date", None),
    ("end", "mp-dates", "end_date", "date", None), ("campaigns", "mp-campaigns", "value", "list", None),
], shared=True)
