"""Overview: sites x metals, worst status in the selected period, with counts and totals."""

import dash
from dash import ClientsideFunction, Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks, register_filter_options
from dashboard.render.components import filter_controls, page_header, status_legend
from dashboard.render.matrix import matrix_table, status_badges
from dashboard.state.store import current_session
from dashboard.views.matrix import Filters, cached_status_counts

dash.register_page(__name__, path="/", name="Overview", order=0, title="tracescreen · overview")
callbacks = PageCallbacks()


def layout(**_query):
    return html.Div([
        page_header("Overview", "Worst screening status of every site and metal over the selected "
                    "period. Each cell: status shape and words, then results above a limit / all "
                    "results. Click a cell to open that site and metal."),
        filter_controls("ov"),
        html.Div(id="ov-totals"),
        status_legend(),
        # the matrix arrives as HTML text in the store; assets/matrix.js puts it in the div
        dcc.Store(id="ov-matrix-html"),
        html.Div(id="ov-matrix", className="matrix-wrap"),
    ])


register_filter_options(callbacks, "ov")


def render_overview(session, uses, tables, fraction, start, end, campaigns):
    """Totals badges and the matrix for a session and the filter values (plain function)."""
    filters = Filters.from_controls(uses, tables, fraction, start, end, campaigns)

    def render():
        counts = cached_status_counts(session, filters)
        return status_badges(counts.sum(axis=(0, 1))), matrix_table(session, counts, filters.fraction)

    return session.cached("overview_view", (filters,), render)


@callbacks.callback(
    Output("ov-totals", "children"), Output("ov-matrix-html", "data"),
    Input("dataset-key", "data"), Input("ov-uses", "value"), Input("ov-tables", "value"),
    Input("ov-fraction", "value"), Input("ov-dates", "start_date"), Input("ov-dates", "end_date"),
    Input("ov-campaigns", "value"),
)
def update_overview(dataset_key, uses, tables, fraction, start, end, campaigns):
    return render_overview(current_session(dataset_key), uses, tables, fraction, start, end, campaigns)


callbacks.clientside_callback(ClientsideFunction("tracescreen", "showMatrix"), Output("ov-matrix", "className"),
                    Input("ov-matrix-html", "data"))
