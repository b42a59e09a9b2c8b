"""Per-batch summary and data review narrative of a laboratory QC review.

The guideline asks a reviewer to record, for each batch, what was reviewed, what was outside its
window, which results were qualified and why, and the source of each criterion (the Data Review
Narrative of [USEPA2020NFG]_). :func:`batch_summary` gives one row per laboratory batch with those
counts and a narrative paragraph in plain words; the report and the dashboard show it.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.coded import joint_codes
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


def _key(frame: pd.DataFrame) -> np.ndarray:
    """``lab\x1fbatch`` of each row (text, one string build per distinct pair)."""
    if not len(frame):
        return np.array([], dtype=object)
    parts = []
    for c in ("lab", "batch"):
        if c not in frame.columns:
            parts.append((np.zeros(len(frame), np.int64), np.array([""], dtype=object)))
            continue
        codes, uniq = pd.factorize(frame[c])   # categorical results: one pass over the categories
        text = np.array([str(u) for u in uniq] + [""], dtype=object)
        parts.append((np.where(codes < 0, len(uniq), codes), text))
    (lc, lt), (bc, bt) = parts
    pair, first = joint_codes(lc, bc)
    text = lt[lc[first]] + "\x1f" + bt[bc[first]]
    return text[pair]


def batch_summary(results: pd.DataFrame, qc: pd.DataFrame, verdicts: pd.DataFrame, links: pd.DataFrame,
                  combined: pd.DataFrame) -> pd.DataFrame:
    """One row per (lab, batch) with QC rows or results (:data:`BATCH_COLUMNS`).

    Counts come from group-bys over the whole tables; only the narrative text is built batch by
    batch, from each batch's own (small) share of the verdicts.
    """
    rk, qk, vk = _key(results), _key(qc), _key(verdicts)
    batches = pd.unique(np.concatenate([qk, rk])) if len(qk) or len(rk) else np.array([], dtype=object)
    not_blank = results["sample_type"].astype(str).to_numpy() != "lab_blank" if len(results) else np.zeros(0, bool)
    n_res = pd.Series(rk[not_blank]).value_counts()
    n_qc = pd.Series(qk).value_counts()
    pos = combined["result_pos"].to_numpy(np.int64)
    keep = not_blank[pos] if len(pos) else np.zeros(0, bool)
    quals = pd.DataFrame({"k": rk[pos][keep], "q": combined["lab_qc_qualifier"].to_numpy(object)[keep]},
                         dtype=object).groupby(["k", "q"]).size().to_dict()
    el_counts = pd.DataFrame({"k": vk, "e": verdicts["element"].to_numpy(object)}, dtype=object) \
        .groupby(["k", "e"]).size().to_dict() if len(vk) else {}
    v_by = pd.Series(np.arange(len(verdicts))).groupby(vk).indices if len(vk) else {}
    va = {c: verdicts[c].to_numpy(object) for c in ("element", "verdict", "analyte", "qc_sample_id", "rule")}
    present = set(zip(qk, qc["element"].to_numpy(object))) if len(qc) else set()
    order = [*ELEMENTS, "ms_msd", "lcs_lcsd"]
    rows = []
    for key in batches:
        lab, batch = key.split("\x1f")
        idx = np.asarray(v_by.get(key, []), dtype=np.int64)
        v = {c: a[idx] for c, a in va.items()}
        reviewed = ", ".join(f"{NAMES.get(e, e)} {el_counts[key, e]}" for e in order if (key, e) in el_counts)
        out = {c: a[(v["verdict"] == "below") | (v["verdict"] == "above")] for c, a in v.items()}
        nj = {c: a[v["verdict"] == "not_judged"] for c, a in v.items()}
        q = {x: quals[key, x] for x in ("R", "UJ", "U", "J-", "J+", "J") if (key, x) in quals}
        absent = [e for e in EXPECTED if (key, e) not in present]
        nr = int(n_res.get(key, 0))
        rows.append({
            "lab": lab, "batch": batch, "results": nr, "qc_rows": int(n_qc.get(key, 0)),
            "elements_reviewed": reviewed, "outside": len(out["rule"]), "not_judged": len(nj["rule"]),
            "results_qualified": sum(q.values()), "qualifiers": ", ".join(f"{k} {n}" for k, n in q.items()),
            "elements_absent": ", ".join(NAMES[e] for e in absent),
            "narrative": _narrative(lab, batch, nr, int(n_qc.get(key, 0)), reviewed, out, nj, q, absent),
        })
    return pd.DataFrame(rows, columns=BATCH_COLUMNS)


def _narrative(lab, batch, n_res, n_qc, reviewed, out, nj, quals, absent) -> str:
    head = f"Batch {batch or '(no batch given)'}" + (f" of {lab}" if lab else "") + \
        f": {_plural(n_res, 'result')}, {_plural(n_qc, 'QC row')} reviewed" + (f" ({reviewed})." if reviewed else ".")
    parts = [head]
    if len(out["rule"]):
        items = [f"{a} {NAMES.get(e, e)} ({q}): {r}" for a, e, q, r in
                 zip(out["analyte"], out["element"], out["qc_sample_id"], out["rule"])]
        parts.append(f"Outside the window ({len(items)}): " + "; ".join(items) + ".")
    else:
        parts.append("Every judged QC value was within its window.")
    if len(nj["rule"]):
        items = sorted({f"{a} {NAMES.get(e, e)}: {r}" for a, e, r in zip(nj["analyte"], nj["element"], nj["rule"])})
        parts.append(f"Not judged ({len(nj['rule'])}): " + "; ".join(items) + ".")
    if quals:
        parts.append("Results qualified: " + ", ".join(f"{k} {n}" for k, n in quals.items()) +
                     " (qualified_results.csv gives each result's rules and numbers).")
    else:
        parts.append("No result was qualified.")
    if absent:
        parts.append("Not in the file: " + ", ".join(NAMES[e] for e in absent) +
                     " (ask the laboratory for the QC summary if the review needs them).")
    parts.append("Windows: the laboratory's own limits where the file gives them, otherwise the US EPA "
                 "National Functional Guidelines (2020) defaults cited in qc_verdicts.csv.")
    return " ".join(parts)
