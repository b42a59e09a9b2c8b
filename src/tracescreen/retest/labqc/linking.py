"""Which results each QC verdict speaks for, and the qualifier it gives each of them.

A QC row and a result belong together when they share the laboratory batch and the analyte
(the laboratory too, when the QC row names one), the fraction when the QC row gives one, and the
preparation batch, analytical run and method when both sides give them. Then, by the element's
scope (``data/lab_qc_windows.yaml``):

``batch``        every such result (control samples, matrix spikes, duplicates, method blanks, ICS);
``bracket``      results analysed after the previous check of the same analyte and before the next
                 one (calibration verifications and calibration blanks); the whole batch when the
                 analysis times are not known;
``low_results``  results below ``low_multiple`` × the quantitation limit (low-level check standard);
``sample``       results of the QC row's own sample, any analyte (ICP-MS internal standards).

Laboratory method blanks themselves are never qualified. One row per (verdict, result) whose
qualifier is not empty; blanks decide result by result (:func:`tracescreen.retest.labqc.blanks.blank_qualifiers`).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.blanks import blank_qualifiers, blank_rule
from tracescreen.retest.labqc.windows import Window, load_windows

LINK_COLUMNS = ["result_pos", "verdict_pos", "element", "qualifier", "reason", "rule", "detail",
                "nondetect_limit_ug_L"]
"""Columns of the link table: the result (position in the results table), the verdict (position in
the verdict table), the qualifier it gives, the retest reason code, and for a ``U`` the level the
result is now a non-detect at [µg/L]."""

REASON_OF = {
    "icv": "calibration_check_failed", "ccv": "calibration_check_failed", "low_check": "calibration_check_failed",
    "calibration_blank": "blank_affects_result", "method_blank": "blank_affects_result",
    "lcs": "control_sample_out", "lcsd": "control_sample_out",
    "lab_duplicate": "lab_duplicate_disagrees", "ms_msd": "lab_duplicate_disagrees",
    "lcs_lcsd": "lab_duplicate_disagrees",
    "ics_a": "interference_check_failed", "ics_ab": "interference_check_failed",
    "serial_dilution": "serial_dilution_disagrees", "internal_standard": "internal_standard_out",
}
"""Retest reason of each element (matrix spikes: ``spike_recovery_low`` / ``_high`` by direction)."""

_OPTIONAL_KEYS = ("prep_batch", "run", "method")


def _coded(frame: pd.DataFrame, col: str) -> tuple[np.ndarray, dict[str, int]]:
    """Integer codes of a text column (-1 where empty or missing) and the code of each text.

    The results' text columns are categoricals, so this is one factorize of the categories, not a
    pass over a million strings."""
    if col not in frame.columns:
        return np.full(len(frame), -1, dtype=np.int64), {}
    codes, uniq = pd.factorize(frame[col])
    lookup = {str(u): i for i, u in enumerate(uniq)}
    empty = lookup.pop("", None)
    codes = codes.astype(np.int64)
    if empty is not None:
        codes[codes == empty] = -1
    return codes, lookup


def _neighbour_times(v: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """Times of the previous and next check of the same family, lab, batch, run and analyte."""
    fam = np.where(v["element"].isin(["icv", "ccv"]), "calibration", v["element"])
    key = pd.Series(fam).str.cat([v["lab"].astype(str).to_numpy(), v["batch"].astype(str).to_numpy(),
                                  v["run"].astype(str).to_numpy(), v["analyte"].astype(str).to_numpy()],
                                 sep="\x1f").to_numpy()
    t = pd.to_datetime(v["analysed_at"]).to_numpy()
    order = np.lexsort((t, key))
    ks, ts = key[order], t[order]
    prev = np.full(len(v), np.datetime64("NaT"), dtype="datetime64[ns]")
    nxt = prev.copy()
    same_prev = np.r_[False, ks[1:] == ks[:-1]]
    same_next = np.r_[ks[1:] == ks[:-1], False]
    p = np.where(same_prev, np.r_[np.datetime64("NaT"), ts[:-1]], np.datetime64("NaT"))
    n = np.where(same_next, np.r_[ts[1:], np.datetime64("NaT")], np.datetime64("NaT"))
    prev[order], nxt[order] = p, n
    return prev, nxt


def link(verdicts: pd.DataFrame, results: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """The results each qualifying verdict speaks for, with the qualifier each gets.

    Parameters
    ----------
    verdicts : pandas.DataFrame
        The verdict table (:data:`tracescreen.retest.labqc.verdicts.VERDICT_COLUMNS`).
    results : pandas.DataFrame
        Accepted results (DEVELOPERS.md contract); optional ``prep_batch``, ``run``, ``method``
        and ``quantitation_limit_ug_L`` columns are used when present.

    Returns
    -------
    pandas.DataFrame
        :data:`LINK_COLUMNS`, one row per (verdict, result) with a qualifier.
    """
    w = windows or load_windows()
    v = verdicts.reset_index(drop=True)
    prev, nxt = _neighbour_times(v) if len(v) else (np.array([]), np.array([]))
    blank = v["element"].isin(["calibration_blank", "method_blank"]).to_numpy()
    acts = ((v["detect_qualifier"] != "") | (v["nondetect_qualifier"] != "")).to_numpy() \
        & np.where(blank, v["verdict"].isin(["above", "below"]), True) & (v["scope"] != "none").to_numpy()
    if not acts.any() or results is None or results.empty:
        return pd.DataFrame({c: pd.Series(dtype=float if c == "nondetect_limit_ug_L" else
                                          "int64" if c.endswith("_pos") else object) for c in LINK_COLUMNS})
    coded = {c: _coded(results, c) for c in ("batch", "analyte", "lab", "fraction", *_OPTIONAL_KEYS)}
    not_blank = (results["sample_type"] != "lab_blank").to_numpy() if "sample_type" in results.columns \
        else np.ones(len(results), dtype=bool)
    groups = pd.Series(np.arange(len(results))).groupby([coded["batch"][0], coded["analyte"][0]], sort=False).indices
    sample_codes, sample_lookup = _coded(results, "sample_id") if (v.loc[acts, "scope"] == "sample").any() \
        else (np.zeros(0, np.int64), {})
    by_sample = pd.Series(np.arange(len(results))).groupby(sample_codes, sort=False).indices if len(sample_codes) else {}

    def code(col: str, text: str) -> int:
        return -1 if text == "" else coded[col][1].get(text, -2)   # -2: a value no result has
    t_res = pd.to_datetime(results["analysed_at"]).to_numpy() if "analysed_at" in results.columns else None
    det = results["detected"].to_numpy(dtype=bool)
    val = results["value_ug_L"].to_numpy(dtype=float)
    dl = results["detection_limit_ug_L"].to_numpy(dtype=float)
    censored = np.where(det, val, dl)
    pos_parts, ver_parts = [], []
    arrays = {c: v[c].to_numpy(object) for c in ("scope", "parent_sample_id", "qc_sample_id", "batch", "analyte",
                                                  "fraction", "lab", "element", *_OPTIONAL_KEYS)}
    arrays["analysed_at"] = v["analysed_at"].to_numpy()
    arrays["quantitation_limit_ug_L"] = v["quantitation_limit_ug_L"].to_numpy(float)
    for i in np.flatnonzero(acts):
        r = {c: a[i] for c, a in arrays.items()}
        if r["scope"] == "sample":
            sid = sample_lookup.get(r["parent_sample_id"] or r["qc_sample_id"], -2)
            pos = np.asarray(by_sample.get(sid, []), dtype=np.int64)
        else:
            pos = np.asarray(groups.get((code("batch", r["batch"]), code("analyte", r["analyte"])), []), dtype=np.int64)
            if r["fraction"]:
                pos = pos[coded["fraction"][0][pos] == code("fraction", r["fraction"])]
        for k in ("lab", *_OPTIONAL_KEYS):
            if r[k]:
                arr = coded[k][0][pos]
                pos = pos[(arr == code(k, r[k])) | (arr == -1)]
        pos = pos[not_blank[pos]]
        if r["scope"] == "bracket" and t_res is not None and not pd.isna(r["analysed_at"]):
            tr = t_res[pos]
            inside = np.isnat(tr) | ((np.isnat(prev[i]) | (tr > prev[i])) & (np.isnat(nxt[i]) | (tr < nxt[i])))
            pos = pos[inside]
        if r["scope"] == "low_results":
            mult = float(w[r["element"]].params.get("low_multiple", 2)) if r["element"] in w else 2.0
            ql = r["quantitation_limit_ug_L"]
            pos = pos[censored[pos] < mult * ql] if np.isfinite(ql) else pos[:0]
        pos_parts.append(pos)
        ver_parts.append(np.full(len(pos), i, dtype=np.int64))
    pos = np.concatenate(pos_parts) if pos_parts else np.zeros(0, np.int64)
    ver = np.concatenate(ver_parts) if ver_parts else np.zeros(0, np.int64)
    return _qualify(v, ver, pos, det, val, dl, w)


def _qualify(v, ver, pos, det, val, dl, w) -> pd.DataFrame:
    vv = v.iloc[ver]
    d = det[pos]
    q = np.where(d, vv["detect_qualifier"].to_numpy(object), vv["nondetect_qualifier"].to_numpy(object))
    rule = vv["rule"].to_numpy(object).copy()
    nd_limit = np.full(len(pos), np.nan)
    is_blank = vv["element"].isin(["calibration_blank", "method_blank"]).to_numpy()
    if is_blank.any():
        links = pd.DataFrame({"verdict": vv["verdict"].to_numpy()[is_blank], "value": vv["value"].to_numpy()[is_blank],
                              "quantitation_limit_ug_L": vv["quantitation_limit_ug_L"].to_numpy()[is_blank],
                              "result_detected": d[is_blank], "result_value_ug_L": val[pos][is_blank],
                              "negative_detect_multiple": [float(w[e].params.get("negative_detect_multiple", 10))
                                                           for e in vv["element"].to_numpy()[is_blank]]})
        bq = blank_qualifiers(links)
        q[is_blank] = bq
        rule[is_blank] = blank_rule(links, bq) + " (" + vv["source"].to_numpy()[is_blank] + ")"
        ql = links["quantitation_limit_ug_L"].to_numpy(float)
        x = links["result_value_ug_L"].to_numpy(float)
        nd_limit[is_blank] = np.where(bq == "U", np.where(np.isfinite(ql) & (x <= ql), ql, x), np.nan)
    element = vv["element"].to_numpy(object)
    reason = np.array([REASON_OF.get(e, "") for e in element], dtype=object)
    spike = np.isin(element, ["ms", "msd"])
    reason[spike] = np.where(vv["verdict"].to_numpy(object)[spike] == "above", "spike_recovery_high", "spike_recovery_low")
    out = pd.DataFrame({"result_pos": pos, "verdict_pos": ver, "element": element, "qualifier": q, "reason": reason,
                        "rule": rule, "detail": vv["detail"].to_numpy(object), "nondetect_limit_ug_L": nd_limit})
    return out[out["qualifier"] != ""].reset_index(drop=True)
