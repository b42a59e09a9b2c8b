"""Results against their calibration: range of the standards, detection limits the calibration
supports, and the retest reasons that follow.

A result is checked against the curves of its analyte: those of its batch when the calibration
file's ``run`` names the result's batch, otherwise all curves of the analyte taken together (the
range of all standards, the lowest LOD of any curve, so that only what no curve supports is
flagged).

* ``above_calibration_range``: a detected result above the highest standard. A result above the
  calibrated range is an extrapolation: dilute and reanalyse [USEPA2020NFG]_ (EPA 200.7 / 200.8
  practice; from memory). A result the laboratory already diluted is reported corrected, so the
  check compares result / dilution when the results carry a ``dilution`` column.
* ``below_calibration_range``: a detected result below the lowest non-zero standard (extrapolated
  towards zero; estimated).
* ``dl_not_supported``: a reported detection limit below what the calibration supports: the
  larger of the curve's LOD (3.3 σ / slope) and the MDL of the MDL study when one is given.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.verdicts import fmt
from tracescreen.retest.rows import RETEST_COLUMNS, empty_retest

REASONS = ("above_calibration_range", "below_calibration_range", "dl_not_supported")
SUGGESTED_ACTIONS = {
    "above_calibration_range": (
        "Above the highest calibration standard (extrapolated): ask the laboratory to dilute and reanalyse."),
    "below_calibration_range": (
        "Below the lowest calibration standard (extrapolated): treat as estimated; ask for a low-level "
        "check standard at this level."),
    "dl_not_supported": (
        "The reported detection limit is lower than the calibration supports: ask the laboratory for its "
        "current MDL study (40 CFR 136 Appendix B) and to re-report the limit."),
}


def analyte_ranges(limits: pd.DataFrame, mdl: pd.DataFrame | None = None) -> pd.DataFrame:
    """Per (analyte, run) and per analyte (run ``""``): lowest and highest standard, the supported
    detection limit and where it comes from."""
    per_run = limits[["analyte", "run", "lowest_standard_ug_L", "highest_standard_ug_L", "lod_ug_L"]].copy()
    per_an = per_run.groupby("analyte", as_index=False).agg(lowest_standard_ug_L=("lowest_standard_ug_L", "min"),
                                                            highest_standard_ug_L=("highest_standard_ug_L", "max"),
                                                            lod_ug_L=("lod_ug_L", "min")).assign(run="")
    out = pd.concat([per_run, per_an[per_run.columns]], ignore_index=True)
    out["mdl_ug_L"] = np.nan
    if mdl is not None and len(mdl):
        out["mdl_ug_L"] = out["analyte"].map(mdl.set_index("analyte")["mdl_ug_L"])
    out["supported_dl_ug_L"] = np.fmax(out["lod_ug_L"], out["mdl_ug_L"])
    out["supported_from"] = np.where(out["mdl_ug_L"] >= out["lod_ug_L"].fillna(-np.inf), "MDL study",
                                     "calibration LOD (3.3 sigma / slope)")
    return out


def calibration_of(rows: pd.DataFrame, ranges: pd.DataFrame) -> pd.DataFrame:
    """For each row (``analyte``, ``batch``): the range of its standards and the supported
    detection limit -- of the curve whose run is the row's batch, else of all curves of the analyte.

    Returns ``lowest_standard_ug_L, highest_standard_ug_L, supported_dl_ug_L, supported_from``,
    aligned with ``rows`` (positional index).
    """
    an = rows["analyte"].astype(str).to_numpy()
    batch = rows["batch"].astype(object).fillna("").astype(str).to_numpy() if "batch" in rows else np.full(len(rows), "")
    by_run = ranges[ranges["run"] != ""].set_index(["analyte", "run"])
    by_an = ranges[ranges["run"] == ""].set_index("analyte")
    k_run = pd.MultiIndex.from_arrays([an, batch])
    hit = k_run.isin(by_run.index)
    cols = ["lowest_standard_ug_L", "highest_standard_ug_L", "supported_dl_ug_L", "supported_from"]
    r = by_an.reindex(an)[cols].reset_index(drop=True)
    if hit.any():
        r.loc[hit, cols] = by_run.reindex(k_run[hit])[cols].to_numpy()
    return r


def annotate_dl_too_high(retest: pd.DataFrame, ranges: pd.DataFrame) -> pd.DataFrame:
    """Add to each ``dl_too_high`` row what the calibration supports: a reported detection limit
    above the limit needed while the calibration supports one at or below it is one the laboratory
    can lower without a new method."""
    m = (retest["reason"] == "dl_too_high").to_numpy()
    if not m.any() or ranges.empty:
        return retest
    sup = calibration_of(retest[m].reset_index(drop=True), ranges)
    s = sup["supported_dl_ug_L"].to_numpy(float)
    note = np.where(np.isfinite(s), "; the calibration supports a detection limit of " + fmt(s) + " µg/L (" +
                    sup["supported_from"].astype(str).to_numpy() + ")", "")
    out = retest.copy()
    out.loc[m, "detail"] = out.loc[m, "detail"].astype(str).to_numpy() + note
    return out


def check_results(results: pd.DataFrame, ranges: pd.DataFrame) -> pd.DataFrame:
    """Retest rows (:data:`RETEST_COLUMNS`) for results outside their calibration or with
    detection limits the calibration does not support."""
    if results is None or results.empty or ranges.empty:
        return empty_retest()
    res = results[results["sample_type"].astype(str) != "lab_blank"].reset_index(drop=True)
    r = calibration_of(res, ranges)
    cols = list(r.columns)
    det = res["detected"].to_numpy(bool)
    x = res["value_ug_L"].to_numpy(float)
    if "dilution" in res.columns:
        x = x / res["dilution"].astype(float).fillna(1.0).clip(lower=1.0).to_numpy()
    dl = res["detection_limit_ug_L"].to_numpy(float)
    lo, hi, sup = (r[c].to_numpy(float) for c in cols[:3])
    checks = [
        ("above_calibration_range", det & (x > hi * (1 + 1e-9)),
         "result " + fmt(x) + " µg/L above the highest standard " + fmt(hi) + " µg/L"),
        ("below_calibration_range", det & (x < lo * (1 - 1e-9)),
         "result " + fmt(x) + " µg/L below the lowest standard " + fmt(lo) + " µg/L"),
        ("dl_not_supported", np.isfinite(dl) & (dl < sup * (1 - 1e-9)),
         "reported DL " + fmt(dl) + " µg/L below the supported " + fmt(sup) + " µg/L (" +
         r["supported_from"].astype(str).to_numpy() + ")"),
    ]
    parts = []
    for reason, mask, detail in checks:
        if mask.any():
            part = res.loc[mask, [c for c in RETEST_COLUMNS[:7] if c in res.columns]].copy()
            part["reason"], part["detail"], part["suggested_action"] = reason, detail[mask], SUGGESTED_ACTIONS[reason]
            parts.append(part)
    if not parts:
        return empty_retest()
    out = pd.concat(parts, ignore_index=True)
    for c in RETEST_COLUMNS:
        if c not in out.columns:
            out[c] = ""
    return out[RETEST_COLUMNS]
