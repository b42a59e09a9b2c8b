"""Lab QC: the laboratory's own QC of each batch, judged element by element, and the results it qualifies."""

import dash
from dash import Input, Output, dcc, html

from dashboard.pages._shared import PageCallbacks
from dashboard.render.components import page_header
from dashboard.render.grid import Column, client_grid
from dashboard.render.quality import html_table
from dashboard.state.store import current_session
from dashboard.views.labqc import (
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


#: the QC values' grid: the verdict says in words whether a value is outside (never colour alone)
VERDICT_GRID = [
    Column("element_name", "QC element", pinned=True, width=230), Column("analyte", "analyte", width=105),
    Column("verdict", "verdict", width=100), Column("value", "value", "number", width=90),
    Column("window_low", "window low", "number", width=105), Column("window_high", "window high", "number", width=110),
    Column("window_from", "window from", width=110), Column("detect_qualifier", "detects", width=85),
    Column("nondetect_qualifier", "non-detects", width=105),
    Column("affected", "results qualified", "number", digits=6, width=130),
    Column("rule", "rule and numbers", "words", width=420), Column("fraction", "fraction", width=95),
    Column("qc_sample_id", "QC sample", width=160), Column("source", "source", width=100),
    Column("checked", "checked in source", width=130),
]
AFFECTED_GRID = [
    Column("site_id", "site", pinned=True, width=115), Column("sample_id", "sample", width=110),
    Column("sampled_at", "sampled", "date"), Column("analyte", "analyte", width=110),
    Column("fraction", "fraction", width=95), Column("value_ug_L", "value (µg/L)", "number"),
    Column("detected", "detected", width=95), Column("detection_limit_ug_L", "DL (µg/L)", "number"),
    Column("qualifier_given", "qualifier given", width=120), Column("lab_qc_qualifier", "combined qualifier", width=140),
    Column("rule", "rule and numbers", "words", width=420),
]

CALIBRATION_GRID = [Column("analyte", "analyte", pinned=True, width=110), Column("run", "run", width=90),
                    Column("weighting", "weighting", width=100)] + [
    Column(c, c.replace("_ug_L", " (µg/L)").replace("_", " "), "number")
    for c in ("n", "slope", "intercept", "r", "residual_sd", "lack_of_fit_p", "lod_ug_L", "loq_ug_L",
              "lowest_standard_ug_L", "highest_standard_ug_L", "max_abs_back_calc_error_pct")]


def _rows(frame) -> list[dict]:
    """Grid rows: missing numbers as empty cells, dates as ISO text."""
    out = frame.copy()
    for c in out.columns:
        if out[c].dtype.kind == "M":
            out[c] = out[c].dt.strftime("%Y-%m-%d")
        elif out[c].dtype.kind == "b":
            out[c] = out[c].map({True: "yes", False: "no"})
    return out.astype(object).where(out.notna(), None).to_dict("records")


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
        html.P("Click a row to list the results it qualifies. Values outside their window come first.",
               className="count-text"),
        client_grid("lq-verdicts", VERDICT_GRID, [], page_size=15, height=460, row_id="id"),
        html.H3("Results this QC value qualifies"),
        html.Span(id="lq-affected-count", className="count-text", role="status"),
        client_grid("lq-affected", AFFECTED_GRID, [], page_size=15),
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
    cal_div = client_grid("lq-calibration-table", CALIBRATION_GRID, _rows(cal)) if len(cal) else \
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
                    Output("lq-verdicts", "rowData"),
                    Input("lq-batch", "value"), Input("lq-element", "value"), Input("lq-outside", "value"),
                    Input("dataset-key", "data"))
def update_lab_qc_batch(batch, element, outside, dataset_key):
    review, _results, _cal = lab_qc(current_session(dataset_key))
    table = verdict_table(review, batch, element, outside_only="outside" in (outside or []))
    rows = _rows(table.rename(columns={"verdict_pos": "id"}).assign(id=lambda t: t["id"].astype(str)))
    return element_options(review, batch), narrative(review, batch), rows


@callbacks.callback(Output("lq-affected", "rowData"), Output("lq-affected-count", "children"),
                    Input("lq-verdicts", "cellClicked"), Input("lq-verdicts", "rowData"), Input("dataset-key", "data"))
def update_lab_qc_affected(clicked, rows, dataset_key):
    review, results, _cal = lab_qc(current_session(dataset_key))
    from dash import ctx

    pos = clicked.get("rowId") if clicked and ctx.triggered_id == "lq-verdicts" and \
        any(t["prop_id"].endswith("cellClicked") for t in ctx.triggered) else None
    table = affected_results(review, results, int(pos) if pos is not None else None)
    text = "Click a QC value above." if pos is None else f"{len(table)} results qualified by this QC value"
    return _rows(table), text
