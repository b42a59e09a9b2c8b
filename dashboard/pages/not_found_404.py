"""The page for an address the dashboard does not have: says so and lists the pages."""

import dash
from dash import dcc, html

from dashboard.pages._shared import PageCallbacks

dash.register_page(__name__, path="/404", name="Page not found", order=99, title="tracescreen · page not found")
callbacks = PageCallbacks()


def layout(**_query):
    pages = sorted([p for p in dash.page_registry.values() if p.get("order", 0) < 90], key=lambda p: p.get("order", 99))
    return html.Div([
        html.H2("There is no page at this address"),
        html.P("The address may be mistyped or come from an older version of the dashboard. The pages are:"),
        html.Ul([html.Li(dcc.Link(p["name"], href=p["relative_path"])) for p in pages]),
    ], className="page-header", id="not-found")
