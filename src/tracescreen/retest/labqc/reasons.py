"""Retest reasons from the laboratory QC review, with the suggested action for each.

One retest row per (result, reason): the reason codes below, the detail naming each QC element,
its qualifier, the rule and the numbers behind it. Laboratory method blanks are never listed;
site samples, field duplicates and field blanks are (a field QC sample in a failed batch is as
doubtful as the samples).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.qualifiers import group_join
from tracescreen.retest.rows import RETEST_COLUMNS, empty_retest

REASONS = (
    "calibration_check_failed", "blank_affects_result", "control_sample_out", "spike_recovery_low",
    "spike_recovery_high", "lab_duplicate_disagrees", "interference_check_failed", "serial_dilution_disagrees",
    "internal_standard_out", "qc_summary_missing",
)
"""Reason codes of the laboratory QC review, in the order they are listed."""

SUGGESTED_ACTIONS = {
    "calibration_check_failed": (
        "A calibration check of the run failed: ask the laboratory to recalibrate and reanalyse the "
        "samples bracketed by the failed check, and for the run's calibration data."),
    "blank_affects_result": (
        "The result cannot be told from the contamination of a laboratory blank: ask the laboratory to "
        "reanalyse with a clean blank, or resample."),
    "control_sample_out": (
        "The laboratory's control sample failed, so the whole preparation batch is in doubt: ask for "
        "the QC summary and for the batch to be re-digested and reanalysed."),
    "spike_recovery_low": (
        "Matrix interference biases results low (the matrix spike recovered too little): ask the "
        "laboratory to re-digest and reanalyse, with a post-digestion spike or standard additions."),
    "spike_recovery_high": (
        "Matrix interference biases results high (the matrix spike recovered too much): ask the "
        "laboratory to re-digest and reanalyse, with a post-digestion spike or standard additions."),
    "lab_duplicate_disagrees": (
        "The laboratory's replicate analyses disagree: ask the laboratory to homogenise and reanalyse "
        "the sample."),
    "interference_check_failed": (
        "Spectral interference (Al, Ca, Fe, Mg) is not corrected: ask the laboratory to reanalyse with "
        "dilution or with interference correction."),
    "serial_dilution_disagrees": (
        "A matrix effect changes the result on dilution: ask the laboratory to reanalyse with dilution."),
    "internal_standard_out": (
        "The internal standard's response was out of range in this sample: ask the laboratory to "
        "reanalyse the sample diluted."),
    "qc_summary_missing": (
        "The batch came without laboratory QC rows: ask the laboratory for the QC summary of the batch "
        "(blanks, control samples, spikes, duplicates, calibration checks)."),
}
"""Suggested action for each reason (common practice)."""



def _take(results: pd.DataFrame, pos: np.ndarray) -> pd.DataFrame:
    cols = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch"]
    out = {}
    for c in cols:
        if c not in results.columns:
            out[c] = np.full(len(pos), "", dtype=object)
        elif c == "sampled_at":
            out[c] = results[c].to_numpy()[pos]
        else:   # the rows first, then text: never a whole million-row column
            out[c] = results[c].take(pos).astype(object).fillna("").astype(str).to_numpy(dtype=object)
    return pd.DataFrame(out)


def retest_rows(results: pd.DataFrame, links: pd.DataFrame, missing_pos: np.ndarray | None = None) -> pd.DataFrame:
    """Retest rows (:data:`RETEST_COLUMNS`) from the review's links (and results of batches without QC)."""
    parts = []
    if len(links):
        text = (links["element"] + " " + links["qualifier"] + ": " + links["rule"] +
                np.where(links["detail"] != "", " [" + links["detail"] + "]", "")).to_numpy(object)
        rank = links["reason"].map({r: i for i, r in enumerate(REASONS)}).to_numpy(np.int64)
        code = links["result_pos"].to_numpy(np.int64) * len(REASONS) + rank
        order = np.argsort(code, kind="stable")
        codes, detail = group_join(code[order], text[order], "; ")
        rows = _take(results, codes // len(REASONS))
        rows["reason"] = np.asarray(REASONS, dtype=object)[codes % len(REASONS)]
        rows["detail"] = detail
        parts.append(rows)
    if missing_pos is not None and len(missing_pos):
        rows = _take(results, np.asarray(missing_pos))
        rows["reason"] = "qc_summary_missing"
        rows["detail"] = "no laboratory QC rows for batch '" + rows["batch"] + "' (other batches have them)"
        parts.append(rows)
    if not parts:
        return empty_retest()
    out = pd.concat(parts, ignore_index=True)
    out["suggested_action"] = out["reason"].map(SUGGESTED_ACTIONS)
    out["_order"] = out["reason"].map({r: i for i, r in enumerate(REASONS)})
    out = out.sort_values(["site_id", "sampled_at", "sample_id", "analyte", "fraction", "_order"], kind="stable")
    return out[RETEST_COLUMNS].reset_index(drop=True)
