"""Per-batch summary and data review narrative of a laboratory QC review.

The guideline asks a reviewer to record, for each batch, what was reviewed, what was outside its
window, which results were qualified and why, and the source of each criterion (the Data Review
Narrative of [USEPA2020NFG]_). :func:`batch_summary` gives one row per laboratory batch with those
counts and a narrative paragraph in plain words; the report and the dashboard show it.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.elements import ELEMENTS

BATCH_COLUMNS = ["lab", "batch", "results", "qc_rows", "elements_reviewed", "outside", "not_judged",
                 "results_qualified", "qualifiers", "elements_absent", "narrative"]
"""Columns of ``qc_batches.csv``."""

EXPECTED = ("method_blank", "lcs", "ms", "ccv")
"""Elements a metals batch is expected to have (their absence is stated in the narrative)."""

NAMES = {
    "icv": "initial calibration verification", "ccv": "continuing calibration verification",
    "low_check": "low-level check standard", "calibration_blank": "calibration blank",
    "method_blank": "method blank", "ics_a": "interference check A", "ics_ab": "interference check AB",
    "lcs": "laboratory control sample", "lcsd": "laboratory control sample duplicate", "ms": "matrix spike",
    "msd": "matrix spike duplicate", "post_digestion_spike": "post-digestion spike",
    "lab_duplicate": "laboratory duplicate", "serial_dilution": "serial dilution",
    "internal_standard": "internal standard", "ms_msd": "MS/MSD precision", "lcs_lcsd": "LCS/LCSD precision",
}
"""Each element in words (verdict elements include the two pair checks)."""


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def _key(frame: pd.DataFrame) -> pd.Series:
    lab = frame["lab"].astype(object).fillna("").astype(str) if "lab" in frame.columns else ""
    return pd.Series(lab, index=frame.index).str.cat(frame["batch"].astype(object).fillna("").astype(str), sep="\x1f")


def batch_summary(results: pd.DataFrame, qc: pd.DataFrame, verdicts: pd.DataFrame, links: pd.DataFrame,
                  combined: pd.DataFrame) -> pd.DataFrame:
    """One row per (lab, batch) with QC rows or results (:data:`BATCH_COLUMNS`)."""
    batches = pd.concat([_key(qc), _key(results)]).unique() if len(qc) or len(results) else []
    rk = _key(results).to_numpy() if len(results) else np.array([], dtype=object)
    not_blank = results["sample_type"].astype(str).to_numpy() != "lab_blank" if len(results) else np.array([], bool)
    qualified_pos = combined["result_pos"].to_numpy()
    qual_of = pd.Series(combined["lab_qc_qualifier"].to_numpy(), index=qualified_pos)
    vk = _key(verdicts).to_numpy() if len(verdicts) else np.array([], dtype=object)
    qk = _key(qc).to_numpy() if len(qc) else np.array([], dtype=object)
    rows = []
    for key in batches:
        lab, batch = key.split("\x1f")
        in_res = np.flatnonzero((rk == key) & not_blank)
        v = verdicts[vk == key]
        q = qc[qk == key]
        counts = v["element"].value_counts()
        reviewed = ", ".join(f"{NAMES.get(e, e)} {counts[e]}" for e in
                             [*ELEMENTS, "ms_msd", "lcs_lcsd"] if e in counts.index)
        out = v[v["verdict"].isin(["below", "above"])]
        nj = v[v["verdict"] == "not_judged"]
        quals = qual_of.reindex(np.intersect1d(in_res, qualified_pos)).value_counts()
        absent = [e for e in EXPECTED if not (q["element"] == e).any()]
        rows.append({
            "lab": lab, "batch": batch, "results": len(in_res), "qc_rows": len(q),
            "elements_reviewed": reviewed, "outside": len(out), "not_judged": len(nj),
            "results_qualified": int(quals.sum()),
            "qualifiers": ", ".join(f"{k} {int(n)}" for k, n in quals.items()),
            "elements_absent": ", ".join(NAMES[e] for e in absent),
            "narrative": _narrative(lab, batch, len(in_res), len(q), reviewed, out, nj, quals, absent),
        })
    return pd.DataFrame(rows, columns=BATCH_COLUMNS)


def _narrative(lab, batch, n_res, n_qc, reviewed, out, nj, quals, absent) -> str:
    head = f"Batch {batch or '(no batch given)'}" + (f" of {lab}" if lab else "") + \
        f": {_plural(n_res, 'result')}, {_plural(n_qc, 'QC row')} reviewed" + (f" ({reviewed})." if reviewed else ".")
    parts = [head]
    if len(out):
        items = [f"{r.analyte} {NAMES.get(r.element, r.element)} ({r.qc_sample_id}): {r.rule}"
                 for r in out.itertuples()]
        parts.append(f"Outside the window ({len(out)}): " + "; ".join(items) + ".")
    else:
        parts.append("Every judged QC value was within its window.")
    if len(nj):
        items = sorted({f"{r.analyte} {NAMES.get(r.element, r.element)}: {r.rule}" for r in nj.itertuples()})
        parts.append(f"Not judged ({len(nj)}): " + "; ".join(items) + ".")
    if quals.sum():
        parts.append("Results qualified: " + ", ".join(f"{k} {int(n)}" for k, n in quals.items()) +
                     " (qualified_results.csv gives each result's rules and numbers).")
    else:
        parts.append("No result was qualified.")
    if absent:
        parts.append("Not in the file: " + ", ".join(NAMES[e] for e in absent) +
                     " (ask the laboratory for the QC summary if the review needs them).")
    parts.append("Windows: the laboratory's own limits where the file gives them, otherwise the US EPA "
                 "National Functional Guidelines (2020) defaults cited in qc_verdicts.csv.")
    return " ".join(parts)
