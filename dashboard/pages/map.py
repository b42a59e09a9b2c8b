"""Map: sites by latitude and longitude, shaped and coloured by worst status (no tile server)."""

import dash
from dash import Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks, register_filter_options
from dashboard.render.components import filter_controls, page_header, status_legend
from dashboard.render.figures import map_figure
from dashboard.state.store import current_session
from dashboard.views.matrix import Filters, cached_status_counts, site_worst

dash.register_page(__name__, path="/map", name="Map", order=1, title="tracescreen · map")
callbacks = PageCallbacks()


def layout(**_query):
    return html.Div([
        page_header("Map", "Monitoring sites at their coordinates, marked by the worst status of any "
                    "metal in the selected period. Drawn without map tiles, so it works offline."),
        filter_controls("mp"),
        status_legend(),
        dcc.Graph(id="map-graph", config={"displaylogo": False}),
    ])


register_filter_options(callbacks, "mp")


@callbacks.callback(
    Output("map-graph", "figure"),
    Input("dataset-key", "data"), Input("mp-uses", "value"), Input("mp-tables", "value"),
    Input("mp-fraction", "value"), Input("mp-dates", "start_date"), Input("mp-dates", "end_date"),
    Input("mp-campaigns", "value"),
)
def update_map(dataset_key, uses, tables, fraction, start, end, campaigns):
    session = current_session(dataset_key)
    counts = cached_status_counts(session, Filters.from_controls(uses, tables, fraction, start, end, campaigns))
    return map_figure(site_worst(session, counts))
