"""Site and metal: results over time with each applicable limit, exceedances and trend."""

import dash
from dash import Input, Output, Patch, State, dcc, html, no_update

from dashboard.pages._shared import PageCallbacks, register_url_state
from dashboard.render.components import page_header
from dashboard.render.grid import Column, client_grid
from dashboard.render.series import series_view, trend_view
from dashboard.state.store import current_session
from dashboard.views.matrix import Filters
from dashboard.views.series import analyte_options, default_selection, fraction_options, site_options
from dashboard.views.url_state import as_choice, as_text, shared_filters
from dashboard.views.wells import site_overlay
from tracescreen.report.charts import PLOTLY_CONFIG

dash.register_page(__name__, path="/site", name="Site & metal", order=2,
                   title="tracescreen · site and metal")
callbacks = PageCallbacks()

TABLE_COLUMNS = [
    Column("sampled_at", "Sampled", "date", pinned=True), Column("fraction", "Fraction", width=100),
    Column("result_text", "Result as reported", width=150), Column("unit", "Unit", width=80),
    Column("detected", "Detected", width=120), Column("value_ug_L", "Value [µg/L]", "number", width=120),
    Column("detection_limit_ug_L", "DL [µg/L]", "number", width=110), Column("status", "Status", "status"),
    Column("above", "Above which limits", "words", width=260), Column("sample_id", "Sample", width=120),
]


def layout(site=None, analyte=None, fraction=None, scale=None, **query):
    session = current_session(None)  # initial choices; callbacks follow the session's data
    site, analyte, fraction = default_selection(session, as_text(site), as_text(analyte), as_text(fraction))
    shared = shared_filters(query)
    kept = {k: shared[k] for k in ("uses", "tables", "campaigns")}
    return html.Div([
        page_header("Site and metal", "Every result over time. Filled shapes are detected values, open shapes "
                    "non-detects drawn at their detection limit. Each single-sample limit is a line labelled with "
                    "its value and table (a hardness-dependent limit steps with the sample hardness; tables with "
                    "the same limit share one line). Running annual means and percentiles are drawn with the "
                    "period values they are compared with. Hover a point for the result as reported and the "
                    "limits it is above."),
        dcc.Store(id="site-url"),
        dcc.Store(id="site-kept-filters", data=kept),
        html.Div([
            html.Div([html.Label("Site", htmlFor="site-select"),
                      dcc.Dropdown(id="site-select", options=site_options(session), value=site,
                                   clearable=False)], className="filter wide"),
            html.Div([html.Label("Metal", htmlFor="analyte-select"),
                      dcc.Dropdown(id="analyte-select", options=analyte_options(session, site),
                                   value=analyte, clearable=False)], className="filter"),
            html.Div([html.Label("Fraction", htmlFor="fraction-select"),
                      dcc.Dropdown(id="fraction-select", value=fraction, clearable=False,
                                   options=fraction_options(session))], className="filter narrow"),
            html.Div([html.Label("Sampling dates", htmlFor="site-dates"),
                      dcc.DatePickerRange(id="site-dates", display_format="YYYY-MM-DD", clearable=True,
                                          start_date=shared["start"], end_date=shared["end"])], className="filter"),
            html.Div([html.Label("Concentration axis", htmlFor="scale-select"),
                      dcc.RadioItems(id="scale-select", value=as_choice(scale, ("linear", "log"), "linear"),
                                     inline=True, options=[{"label": " linear ", "value": "linear"},
                                                           {"label": " log ", "value": "log"}])],
                     className="filter"),
        ], className="filters"),
        html.Div([html.Span(id="site-kept-words", className="count-text"),
                  html.Button("Clear these filters", id="site-clear-filters", className="button small",
                              style={"display": "inline-block" if any(kept.values()) else "none"})],
                 className="toolbar"),
        dcc.Store(id="site-shown"),
        dcc.Loading(dcc.Graph(id="site-chart", config=PLOTLY_CONFIG), type="dot", delay_show=300),
        html.Div(id="site-summary", className="summary", role="status"),
        dcc.Loading(html.Div(id="site-trend", className="trend"), type="dot", delay_show=300),
        html.P(id="site-wells", className="trend"),
        html.Button("Show the chart's data as a table", id="site-table-btn", className="button",
                    **{"aria-expanded": "false", "aria-controls": "site-table"}),
        html.Div(id="site-table", className="data-table-view"),
    ])


@callbacks.callback(Output("site-select", "options"), Input("dataset-key", "data"))
def update_site_options(dataset_key):
    return site_options(current_session(dataset_key))


@callbacks.callback(Output("analyte-select", "options"), Input("dataset-key", "data"), Input("site-select", "value"))
def update_analyte_options(dataset_key, site):
    return analyte_options(current_session(dataset_key), site)


def _filters(kept, start, end) -> Filters:
    kept = kept or {}
    return Filters.from_controls(kept.get("uses"), kept.get("tables"), None, start, end, kept.get("campaigns"))


@callbacks.callback(
    Output("site-chart", "figure"), Output("site-summary", "children"), Output("site-shown", "data"),
    Input("dataset-key", "data"), Input("site-select", "value"), Input("analyte-select", "value"),
    Input("fraction-select", "value"), Input("scale-select", "value"), Input("site-dates", "start_date"),
    Input("site-dates", "end_date"), Input("site-kept-filters", "data"),
)
def update_site_chart(dataset_key, site, analyte, fraction, scale, start=None, end=None, kept=None):
    fig, summary, _ = series_view(current_session(dataset_key), site, analyte, fraction, scale == "log",
                                  _filters(kept, start, end))
    return fig, summary, {"key": dataset_key, "site": site, "analyte": analyte, "fraction": fraction}


@callbacks.callback(
    Output("site-chart", "figure", allow_duplicate=True), Output("site-trend", "children"),
    Input("site-shown", "data"),
    prevent_initial_call=True,
)
def update_site_trend(shown):
    """Add the trend lines and tests once the chart is drawn (the statistics take longer)."""
    if not shown:
        return no_update, ""
    traces, texts = trend_view(current_session(shown["key"]), shown["site"], shown["analyte"], shown["fraction"])
    paragraphs = [html.P(t) for t in texts]
    if not traces:
        return no_update, paragraphs
    patch = Patch()
    for trace in traces:
        patch["data"].append(trace)
    return patch, paragraphs


@callbacks.callback(
    Output("site-chart", "figure", allow_duplicate=True), Output("site-wells", "children"),
    Input("site-shown", "data"),
    prevent_initial_call=True,
)
def update_site_wells(shown):
    """For a compliance well (dashboard started with --network): its background prediction limit on
    the chart and its status over the retest sequence, with a link to the Wells page."""
    if not shown or shown.get("fraction") == "all":
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


@callbacks.callback(
    Output("site-kept-filters", "data"), Output("site-clear-filters", "style"),
    Input("site-clear-filters", "n_clicks"), prevent_initial_call=True,
)
def clear_kept_filters(_n):
    return {"uses": [], "tables": [], "campaigns": []}, {"display": "none"}


@callbacks.callback(Output("site-kept-words", "children"), Input("site-kept-filters", "data"))
def describe_kept_filters(kept):
    kept = kept or {}
    parts = [f"{label} {', '.join(kept[k])}" for k, label in (("tables", "limit tables"), ("uses", "uses"),
                                                               ("campaigns", "campaigns")) if kept.get(k)]
    return ("Counting only " + "; ".join(parts) + " (as on the overview).") if parts else ""


@callbacks.callback(
    Output("site-table", "children"), Output("site-table-btn", "children"), Output("site-table-btn", "aria-expanded"),
    Input("site-table-btn", "n_clicks"), Input("site-shown", "data"),
    State("scale-select", "value"), State("site-dates", "start_date"), State("site-dates", "end_date"),
    State("site-kept-filters", "data"), prevent_initial_call=True,
)
def show_chart_table(n_clicks, shown, scale, start, end, kept):
    if not n_clicks or n_clicks % 2 == 0 or not shown:
        return "", "Show the chart's data as a table", "false"
    _, _, rows = series_view(current_session(shown["key"]), shown["site"], shown["analyte"], shown["fraction"],
                             scale == "log", _filters(kept, start, end))
    return client_grid("site-table-grid", TABLE_COLUMNS, rows, page_size=20), "Hide the chart's data", "true"


register_url_state(callbacks, "/site", "site-url", [
    ("site", "site-select", "value", "text", None), ("analyte", "analyte-select", "value", "text", None),
    ("fraction", "fraction-select", "value", "text", None), ("scale", "scale-select", "value", "text", "linear"),
    ("start", "site-dates", "start_date", "date", None), ("end", "site-dates", "end_date", "date", None),
    ("uses", "site-kept-filters", "data", "kept", None), ("tables", "site-kept-filters", "data", "kept", None),
    ("campaigns", "site-kept-filters", "data", "kept", None),
])
