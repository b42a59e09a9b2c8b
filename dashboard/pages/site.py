"""Site and metal: results over time with each applicable limit, exceedances and trend."""

import dash
from dash import Input, Output, Patch, dcc, html, no_update

from dashboard.pages._shared import PageCallbacks
from dashboard.render.components import page_header
from dashboard.render.series import series_view, trend_view
from dashboard.state.store import current_session
from dashboard.views.series import analyte_options, default_selection, site_options
from dashboard.views.wells import site_overlay

dash.register_page(__name__, path="/site", name="Site & metal", order=2,
                   title="tracescreen · site and metal")
callbacks = PageCallbacks()


def layout(site=None, analyte=None, fraction=None, **_query):
    session = current_session(None)  # initial choices; callbacks follow the session's data
    site, analyte, fraction = default_selection(session, site, analyte, fraction)
    return html.Div([
        page_header("Site and metal", "Every result over time. Filled markers are detected values, "
                    "open markers are non-detects drawn at their detection limit. Each applicable "
                    "limit is a line (a hardness-dependent limit steps with the sample hardness). "
                    "Hover a point for the result as reported, lab, batch, qualifier and the "
                    "limit's source."),
        html.Div([
            html.Div([html.Label("Site", htmlFor="site-select"),
                      dcc.Dropdown(id="site-select", options=site_options(session), value=site,
                                   clearable=False)], className="filter wide"),
            html.Div([html.Label("Metal", htmlFor="analyte-select"),
                      dcc.Dropdown(id="analyte-select", options=analyte_options(session, site),
                                   value=analyte, clearable=False)], className="filter"),
            html.Div([html.Label("Fraction", htmlFor="fraction-select"),
                      dcc.Dropdown(id="fraction-select", value=fraction, clearable=False,
                                   options=[{"label": f, "value": f} for f in session.fractions])],
                     className="filter narrow"),
            html.Div([html.Label("Concentration axis", htmlFor="scale-select"),
                      dcc.RadioItems(id="scale-select", value="linear", inline=True,
                                     options=[{"label": " linear ", "value": "linear"},
                                              {"label": " log ", "value": "log"}])],
                     className="filter"),
        ], className="filters"),
        dcc.Store(id="site-shown"),
        dcc.Loading(dcc.Graph(id="site-chart", config={"displaylogo": False}), type="dot"),
        html.Div(id="site-summary", className="summary"),
        html.P(id="site-trend", className="trend"),
        html.P(id="site-wells", className="trend"),
    ])


@callbacks.callback(Output("site-select", "options"), Input("dataset-key", "data"))
def update_site_options(dataset_key):
    return site_options(current_session(dataset_key))


@callbacks.callback(Output("analyte-select", "options"), Input("dataset-key", "data"), Input("site-select", "value"))
def update_analyte_options(dataset_key, site):
    return analyte_options(current_session(dataset_key), site)


@callbacks.callback(
    Output("site-chart", "figure"), Output("site-summary", "children"), Output("site-shown", "data"),
    Input("dataset-key", "data"), Input("site-select", "value"), Input("analyte-select", "value"),
    Input("fraction-select", "value"), Input("scale-select", "value"),
)
def update_site_chart(dataset_key, site, analyte, fraction, scale):
    fig, summary = series_view(current_session(dataset_key), site, analyte, fraction, scale == "log")
    return fig, summary, {"key": dataset_key, "site": site, "analyte": analyte, "fraction": fraction}


@callbacks.callback(
    Output("site-chart", "figure", allow_duplicate=True), Output("site-trend", "children"),
    Input("site-shown", "data"),
    prevent_initial_call=True,
)
def update_site_trend(shown):
    """Add the trend line and test once the chart is drawn (the statistics take longer)."""
    if not shown:
        return no_update, ""
    trace, text = trend_view(current_session(shown["key"]), shown["site"], shown["analyte"], shown["fraction"])
    if trace is None:
        return no_update, text
    patch = Patch()
    patch["data"].append(trace)
    return patch, text


@callbacks.callback(
    Output("site-chart", "figure", allow_duplicate=True), Output("site-wells", "children"),
    Input("site-shown", "data"),
    prevent_initial_call=True,
)
def update_site_wells(shown):
    """For a compliance well (dashboard started with --network): its background prediction limit on
    the chart and its status over the retest sequence, with a link to the Wells page."""
    if not shown:
        return no_update, ""
    trace, text = site_overlay(current_session(shown["key"]), shown["site"], shown["analyte"], shown["fraction"])
    if not text:
        return no_update, ""
    link = dcc.Link("open on the Wells page", href="/wells?series=" + "|".join(
        (shown["site"], shown["analyte"], shown["fraction"])))
    if trace is None:
        return no_update, [text, " ", link]
    patch = Patch()
    patch["data"].append(trace)
    return patch, [text, " ", link]
