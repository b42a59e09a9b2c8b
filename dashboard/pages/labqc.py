"""Lab QC: the laboratory's own QC of each batch, judged element by element, and the results it qualifies."""

import dash
from dash import Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks
from dashboard.render.components import data_table, page_header
from dashboard.render.quality import html_table
from dashboard.state.store import current_session
from dashboard.views.labqc import (
    AFFECTED_COLUMNS,
    VERDICT_COLUMNS,
    affected_results,
    batch_options,
    batch_table,
    calibration_table,
    element_options,
    lab_qc,
    narrative,
    verdict_table,
)

dash.register_page(__name__, path="/labqc", name="Lab QC", order=4.5, title="tracescreen · lab QC")
callbacks = PageCallbacks()
NO_QC = ("The files carry no laboratory QC rows (no calibration checks, blanks, control samples, spikes or "
         "duplicates). Ask the laboratory for the QC summary of each batch, or give it with --qc FILE.")


#: rows outside their window tinted (and their verdict word says so: colour is never the only cue)
VERDICT_STYLES = [{"if": {"filter_query": '{verdict} = "below" || {verdict} = "above"'},
                   "backgroundColor": "#fdecea"},
                  {"if": {"filter_query": '{verdict} = "not_judged"'}, "backgroundColor": "#f4f4f4"}]


def _round(frame):
    """Numbers to 4 significant figures for display (the CSV outputs keep them whole)."""
    out = frame.copy()
    for c in out.columns:
        if out[c].dtype.kind == "f":
            out[c] = out[c].map(lambda v: "" if v != v else float(f"{v:.4g}"))
    return out


def layout(**_query):
    return html.Div([
        page_header("Lab QC", "The laboratory's own quality control of each batch (calibration checks, blanks, "
                    "control samples, matrix spikes, duplicates, interference checks, serial dilutions, internal "
                    "standards), each judged against the laboratory's limits where its file gives them, otherwise "
                    "the US EPA National Functional Guidelines (2020) defaults, and the results each qualifies "
                    "(U, J, J+, J-, UJ, R; the most protective qualifier wins)."),
        html.P(id="lq-none", className="intro"),
        html.Div([
            html.Div([html.Label("Batch", htmlFor="lq-batch"),
                      dcc.Dropdown(id="lq-batch", clearable=False, placeholder="choose a batch")], className="filter"),
            html.Div([html.Label("QC element", htmlFor="lq-element"),
                      dcc.Dropdown(id="lq-element", placeholder="all elements")], className="filter"),
            html.Div([dcc.Checklist(id="lq-outside", options=[{"label": " only values outside or not judged",
                                                               "value": "outside"}], value=[])],
                     className="filter"),
        ], className="filters"),
        html.H3("Data review narrative"),
        html.P(id="lq-narrative", className="narrative"),
        html.H3("QC values"),
        html.P("Click a row to list the results it qualifies. Rows outside their window come first.",
               className="count-text"),
        data_table("lq-verdicts", VERDICT_COLUMNS, page_size=15, server_side=False,
                   style_data_conditional=VERDICT_STYLES),
        html.H3("Results this QC value qualifies"),
        html.Span(id="lq-affected-count", className="count-text"),
        data_table("lq-affected", AFFECTED_COLUMNS, page_size=15, server_side=False),
        html.Details([html.Summary(id="lq-batches-summary"), html.Div(id="lq-batches")], id="lq-batches-details"),
        html.H3("Calibration"),
        html.Div(id="lq-calibration"),
    ])


@callbacks.callback(Output("lq-none", "children"), Output("lq-batches-summary", "children"),
                    Output("lq-batches", "children"), Output("lq-batch", "options"), Output("lq-batch", "value"),
                    Output("lq-calibration", "children"), Input("dataset-key", "data"))
def update_lab_qc_batches(dataset_key):
    review, _results, calibration = lab_qc(current_session(dataset_key))
    cal = calibration_table(calibration)
    cal_div = html_table(_round(cal), "lq-calibration-table") if len(cal) else \
        html.P("No calibration file was given (--calibration FILE).", className="intro")
    if review is None:
        return NO_QC, "Batches", "", [], None, cal_div
    table = batch_table(review)
    with_qc = table[table["qc_rows"] > 0]
    without = table[table["qc_rows"] == 0]
    opts = [o for o in batch_options(review) if table.at[o["value"], "qc_rows"] > 0]
    summary = f"Batches: {len(with_qc)} with laboratory QC rows, {len(without)} without (click to list)"
    body = [html_table(with_qc.reset_index(drop=True), "lq-batches-table")]
    if len(without):
        body.append(html.P("Without QC rows (ask the laboratory for their QC summary): "
                           + ", ".join(without["batch"].astype(str)), className="intro"))
    return "", summary, body, opts, (opts[0]["value"] if opts else None), cal_div


@callbacks.callback(Output("lq-element", "options"), Output("lq-narrative", "children"),
                    Output("lq-verdicts", "data"), Output("lq-verdicts", "active_cell"),
                    Input("lq-batch", "value"), Input("lq-element", "value"), Input("lq-outside", "value"),
                    Input("dataset-key", "data"))
def update_lab_qc_batch(batch, element, outside, dataset_key):
    review, _results, _cal = lab_qc(current_session(dataset_key))
    table = verdict_table(review, batch, element, outside_only="outside" in (outside or []))
    rows = _round(table).rename(columns={"verdict_pos": "id"}).to_dict("records")
    return element_options(review, batch), narrative(review, batch), rows, None


@callbacks.callback(Output("lq-affected", "data"), Output("lq-affected-count", "children"),
                    Input("lq-verdicts", "active_cell"), Input("dataset-key", "data"))
def update_lab_qc_affected(active_cell, dataset_key):
    review, results, _cal = lab_qc(current_session(dataset_key))
    pos = active_cell.get("row_id") if active_cell else None
    table = affected_results(review, results, int(pos) if pos is not None else None)
    table["sampled_at"] = table["sampled_at"].astype(str).str[:10] if len(table) else table.get("sampled_at")
    text = "" if pos is None else f"{len(table)} results qualified by this QC value"
    return _round(table).to_dict("records"), text
