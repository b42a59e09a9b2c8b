"""Limit tables: every loaded table with its citation, use, unit, entries and sites."""

import dash
from dash import Input, Output, html

from dashboard.pages._shared import PageCallbacks
from dashboard.render.components import page_header
from dashboard.render.limit_tables import table_sections
from dashboard.state.store import current_session

dash.register_page(__name__, path="/limits", name="Limit tables", order=6,
                   title="tracescreen · limit tables")
callbacks = PageCallbacks()


def layout(**_query):
    return html.Div([
        page_header("Limit tables", "The limit tables this session screens against. Each entry applies "
                    "to a result of the same metal and fraction at a site whose uses include the "
                    "table's use, when the sampling date falls in the entry's effective dates. "
                    "Hardness formulas use H, the sample hardness as mg/L CaCO3."),
        html.Div(id="limits-list"),
    ])


@callbacks.callback(Output("limits-list", "children"), Input("dataset-key", "data"))
def update_limits(dataset_key):
    return table_sections(current_session(dataset_key))
