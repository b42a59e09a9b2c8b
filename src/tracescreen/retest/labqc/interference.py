"""Interference checks: interference check solutions (ICP), serial dilutions, ICP-MS internal
standards.

* ICS-AB (analytes spiked with the interferents): recovery = 100 · found / true; 80–120 %
  (below 50 %: R) [USEPA2020NFG]_, as also printed in a Tier II validation form (see
  ``data/lab_qc_windows.yaml``). ICS-A rows that give a true value (the interferents Al, Ca, Fe,
  Mg) are judged the same way.
* ICS-A, analytes not in the solution: the result should read near zero; |result| above the
  quantitation limit suggests a false positive (J+) or, negative, a false negative (J- / UJ).
  Not judged without a quantitation limit.
* Serial dilution (ICP, 1:5): %D = 100 · |I − S| / I, I the original result and S the diluted
  result corrected for the dilution; judged only when I ≥ 50 × the detection limit; outside 10 %:
  detects J.
* Internal standards (ICP-MS): response in the sample as % of the response in the calibration
  blank, 60–125 % (EPA Method 200.8); outside: J / UJ for the results of that sample.

The guideline limits ICS qualification to samples whose interferent levels are comparable to the
ICS; the file does not say which those are, so an ICS verdict speaks for the batch (stated in the
rule).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.precision import parent_results
from tracescreen.retest.labqc.spikes import recovery
from tracescreen.retest.labqc.verdicts import concat, edges, fmt, verdict_rows
from tracescreen.retest.labqc.windows import Window, load_windows


def review_ics(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for ICS-A and ICS-AB rows."""
    w = windows or load_windows()
    parts = []
    sub = qc[qc["element"].isin(["ics_a", "ics_ab"])]
    if sub.empty:
        return concat([])
    true = sub["true_value_ug_L"].fillna(sub["spike_added_ug_L"]).to_numpy(float)
    spiked = np.isfinite(true) & (true > 0)
    rec_rows = sub[spiked]
    if len(rec_rows):
        window = w["ics_ab"]
        found = rec_rows["result_ug_L"].fillna(0.0).to_numpy(float)
        t = true[spiked]
        reported = rec_rows["reported_recovery"].to_numpy(float)
        value = np.where(t > 0, recovery(found, t), reported)
        lo, hi, src = edges(rec_rows["recovery_low"], rec_rows["recovery_high"], window)
        parts.append(verdict_rows(rec_rows, window, "ics_ab", value, lo, hi, src, reported=reported,
                                  detail="found " + fmt(found) + ", true " + fmt(t) + " µg/L; applies to the batch "
                                  "(samples with comparable Al, Ca, Fe, Mg are not identified in the file)"))
    zero = sub[~spiked]
    if len(zero):
        window = w["ics_a"]
        x = np.where(zero["detected"].to_numpy(bool), zero["result_ug_L"].to_numpy(float), 0.0)
        ql = zero["quantitation_limit_ug_L"].to_numpy(float)
        why = np.where(np.isfinite(ql), "", "not judged: no quantitation limit given for the ICS-A result")
        with np.errstate(invalid="ignore", divide="ignore"):
            value = x / ql
        parts.append(verdict_rows(zero, window, "ics_a", value, -1.0, 1.0, "guideline", not_judged_why=why,
                                  detail="ICS-A result " + fmt(x) + " µg/L, QL " + fmt(ql) + " µg/L"))
    return concat(parts)


def review_serial_dilutions(qc: pd.DataFrame, results: pd.DataFrame | None = None,
                            windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for serial dilutions (percent difference from the original result)."""
    sub = qc[qc["element"] == "serial_dilution"]
    if sub.empty:
        return concat([])
    window = (windows or load_windows())["serial_dilution"]
    parent = parent_results(sub, results)
    orig = sub["original_ug_L"].to_numpy(float)
    orig = np.where(np.isfinite(orig), orig, np.where(parent["detected"].eq(True).to_numpy(),
                                                      parent["result_ug_L"], np.nan))
    dl = np.fmax(sub["detection_limit_ug_L"].to_numpy(float), parent["detection_limit_ug_L"].to_numpy(float))
    s = sub["result_ug_L"].to_numpy(float)
    mult = float(window.params.get("min_multiple_of_dl", 50))
    with np.errstate(invalid="ignore", divide="ignore"):
        pct = 100.0 * np.abs(orig - s) / orig
    reported = sub["reported_percent_difference"].to_numpy(float)
    value = np.where(np.isfinite(pct), pct, reported)
    low_orig = np.isfinite(orig) & np.isfinite(dl) & (orig < mult * dl)
    why = np.where(low_orig, [f"not judged: original result {o} µg/L < {mult:g} x DL {d} µg/L ({window.source})"
                              for o, d in zip(fmt(orig), fmt(dl))], "")
    direction = np.where(s > orig, " (diluted higher: suppression in the undiluted sample, biased low)",
                         np.where(s < orig, " (diluted lower: enhancement, biased high)", ""))
    detail = "original " + fmt(orig) + ", diluted (corrected) " + fmt(s) + " µg/L" + direction
    lo, hi, src = edges(np.full(len(sub), np.nan), np.full(len(sub), np.nan), window)
    return verdict_rows(sub, window, "serial_dilution", value, lo, hi, src, reported=reported,
                        not_judged_why=why, detail=detail)


def review_internal_standards(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for ICP-MS internal standard recoveries (scope: the sample)."""
    sub = qc[qc["element"] == "internal_standard"]
    if sub.empty:
        return concat([])
    window = (windows or load_windows())["internal_standard"]
    true = sub["true_value_ug_L"].to_numpy(float)
    found = sub["result_ug_L"].to_numpy(float)
    computed = recovery(found, true)
    reported = sub["reported_recovery"].to_numpy(float)
    value = np.where(np.isfinite(reported), reported, computed)
    lo, hi, src = edges(sub["recovery_low"], sub["recovery_high"], window)
    name = sub["internal_standard"].where(sub["internal_standard"] != "", sub["analyte"])
    detail = "internal standard " + name.astype(str).to_numpy() + " in sample " + \
        sub["parent_sample_id"].where(sub["parent_sample_id"] != "", sub["qc_sample_id"]).astype(str).to_numpy()
    return verdict_rows(sub, window, "internal_standard", value, lo, hi, src, reported=reported, detail=detail)
