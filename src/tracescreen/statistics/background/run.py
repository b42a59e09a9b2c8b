"""All statistics against background and fixed standards, as tables (one per method).

:func:`well_statistics` is what the ``tracescreen wells`` command, the report and the dashboard
call. Every table carries the inputs and decisions behind each number.
"""

from __future__ import annotations

from dataclasses import fields

import numpy as np
import pandas as pd

from tracescreen.vocabulary import REL_TOL

from .control_charts import CHART_STATUSES, shewhart_cusum
from .data import SERIES, monitoring_rows, series_table
from .design import Design
from .prediction import prediction_limits
from .sequence import evaluate_sequences
from .standards import confidence_limits, standards_for_series
from .statement import design_statement
from .tolerance import nonparametric_coverage, parametric_utl

TABLES = ("design", "design_statement", "well_data", "background", "prediction_limits", "retest_sequence", "well_status",
          "control_charts", "tolerance_limits", "confidence_limits")


def design_record(design: Design, derived: pd.DataFrame) -> pd.DataFrame:
    """The design as ``setting, value`` rows: every input, then what it implies."""
    inputs = {f.name: getattr(design, f.name) for f in fields(design)}
    inputs["plan"] = design.plan.label
    inputs["nonparametric_plans"] = ", ".join(p.label for p in design.nonparametric_plans)
    for k in ("background_from", "background_to"):
        inputs[k] = "" if inputs[k] is None else inputs[k].date().isoformat()
    rows = [{"setting": k, "value": "" if v is None else str(v), "kind": "input"} for k, v in inputs.items()]
    rows += [{"setting": k, "value": str(v), "kind": "derived"} for k, v in derived.iloc[0].items()
             if k not in ("swfpr", "plan", "evaluations_per_year", "nonparametric_plans")]
    return pd.DataFrame(rows)


def tolerance_limits(background: pd.DataFrame, design: Design) -> pd.DataFrame:
    """Upper tolerance limit of every background set (parametric or the maximum)."""
    b = background.copy()
    param = b["distribution"].isin(["normal", "lognormal"]) & (b["n"] >= 2)
    utl = parametric_utl(b["mean"].astype(float), b["sd"].astype(float), b["n"].astype(float),
                         design.tolerance_coverage, design.tolerance_confidence,
                         (b["distribution"] == "lognormal").to_numpy())
    npm = ~param & (b["n"] >= 1)
    b["method"] = np.where(param, "parametric_" + b["distribution"], np.where(npm, "nonparametric_maximum", "none"))
    b["utl_ug_L"] = np.where(param, utl, np.where(npm, b["max_value"].astype(float), np.nan))
    b["coverage"] = np.where(param, design.tolerance_coverage,
                             nonparametric_coverage(b["n"].astype(float), 1, design.tolerance_confidence))
    b["confidence"] = design.tolerance_confidence
    b["utl_notes"] = np.where(npm & b["max_nondetect"].astype(bool),
                              "the maximum is a non-detect: the limit is a detection limit", "")
    b.loc[npm, "utl_notes"] = b.loc[npm, "utl_notes"] + np.where(
        b.loc[npm, "utl_notes"] != "", "; ", "") + "non-parametric: coverage achieved at the stated confidence"
    cols = ["kind", "well_group", "site_id", "analyte", "fraction", "n", "n_detected", "percent_nondetect",
            "distribution", "mean", "sd", "method", "utl_ug_L", "coverage", "confidence", "utl_notes"]
    return b[cols].reset_index(drop=True)


def control_charts(rows: pd.DataFrame, background: pd.DataFrame, design: Design) -> pd.DataFrame:
    """Shewhart-CUSUM points of every compliance series with a normal or lognormal baseline."""
    base = background[(background["kind"] == "intrawell")
                      & background["distribution"].isin(["normal", "lognormal"]) & (background["n"] >= 2)]
    comp = rows[rows["period"] == "compliance"].merge(base[SERIES + ["n", "mean", "sd", "distribution"]], on=SERIES)
    if comp.empty:
        return pd.DataFrame(columns=SERIES + ["sampled_at", "value_ug_L", "nondetect", "z", "cusum", "status",
                                              "baseline_n", "baseline_mean", "baseline_sd", "scale", "k", "h", "scl"])
    comp = comp.sort_values(SERIES + ["sampled_at"], kind="stable").reset_index(drop=True)
    code = comp.groupby(SERIES, sort=False).ngroup().to_numpy()
    pos = comp.groupby(SERIES, sort=False).cumcount().to_numpy()
    g, L = code.max() + 1, pos.max() + 1
    vals, nd, valid = np.zeros((g, L)), np.zeros((g, L), bool), np.zeros((g, L), bool)
    vals[code, pos], nd[code, pos], valid[code, pos] = comp["value"], comp["nondetect"], True
    first = comp.groupby(code).first()
    res = shewhart_cusum(vals, nd, valid, first["mean"].to_numpy(float), first["sd"].to_numpy(float),
                         log_scale=(first["distribution"] == "lognormal").to_numpy(),
                         k=design.control_chart_k, h=design.control_chart_h, scl=design.control_chart_scl)
    out = comp[SERIES + ["sampled_at"]].assign(
        value_ug_L=comp["value"], nondetect=comp["nondetect"], z=res["z"][code, pos], cusum=res["cusum"][code, pos],
        status=np.array(CHART_STATUSES, dtype=object)[res["status"][code, pos]],
        baseline_n=comp["n"], baseline_mean=comp["mean"], baseline_sd=comp["sd"],
        scale=np.where(comp["distribution"] == "lognormal", "log", "linear"),
        k=design.control_chart_k, h=design.control_chart_h, scl=design.control_chart_scl)
    return out


def well_statistics(results: pd.DataFrame, network: pd.DataFrame, design: Design,
                    screened: pd.DataFrame | None = None, background_standard: bool = False) -> dict[str, pd.DataFrame]:
    """Every table of the statistics against background and standards (:data:`TABLES`).

    Parameters
    ----------
    results : DataFrame
        Accepted results (the loader's contract).
    network : DataFrame
        :func:`tracescreen.io.network.read_network`.
    design : Design
    screened : DataFrame, optional
        Screening output; its limit entries are the fixed standards of the confidence limits.
    background_standard : bool
        Use the group's background upper tolerance limit as the standard where it is above the
        table value (a background-based standard, e.g. 40 CFR 257.95(h)).
    """
    rows = monitoring_rows(results, network, design)
    series = series_table(rows)
    pl = prediction_limits(rows, series, design)
    limits = pl["limits"]
    compliance = pl["compliance_rows"]
    seq = evaluate_sequences(compliance, limits, design.evaluation_interval_days)
    status = limits[SERIES + ["comparison", "method", "plan", "limit_ug_L"]].merge(seq["summary"], on=SERIES, how="left")
    tol = tolerance_limits(pl["background"], design)
    standards = standards_for_series(screened, series)
    if background_standard and not standards.empty:
        utl = tol[tol["kind"] == "interwell"][["well_group", "analyte", "fraction", "utl_ug_L"]]
        s = standards.merge(series[SERIES + ["well_group"]], on=SERIES).merge(
            utl, on=["well_group", "analyte", "fraction"], how="left")
        higher = s["utl_ug_L"] > s["standard_ug_L"] * (1 + REL_TOL)
        s["standard_ug_L"] = np.where(higher, s["utl_ug_L"], s["standard_ug_L"])
        s["standard_basis"] = np.where(higher, "background (upper tolerance limit above the table value)",
                                       s["standard_basis"])
        standards = s.drop(columns=["well_group", "utl_ug_L"])
    tables = {
        "design": design_record(design, pl["design"]),
        "background": pl["background"],
        "prediction_limits": limits.drop(columns=["set_code", "plan_object"]),
        "retest_sequence": seq["sequence"],
        "well_status": status,
        "control_charts": control_charts(rows, pl["background"], design),
        "tolerance_limits": tol,
        "confidence_limits": confidence_limits(compliance, series, standards, design),
    }
    tables["design_statement"] = design_statement(tables)
    tables["well_data"] = compliance[["site_id", "analyte", "fraction", "sampled_at", "value", "nondetect", "quantified",
                                      "role", "well_group", "period"]].rename(columns={"value": "value_ug_L"})
    return {name: tables[name] for name in TABLES}
