"""Laboratory precision: laboratory duplicates, matrix spike / matrix spike duplicate pairs and
laboratory control sample / duplicate pairs.

Relative percent difference: RPD = 100 · |A − B| / ((A + B) / 2).

* Laboratory duplicate (water) [USEPA2020NFG]_: when both results are at least 5 × the
  quantitation limit, RPD ≤ 20 %; otherwise |A − B| ≤ the quantitation limit. Outside: detects
  J, non-detects UJ. A non-detect is taken at its detection limit. Without a quantitation limit
  the detection limit stands in for it (stated in the rule).
* MS/MSD and LCS/LCSD pairs: RPD of the two measured results ≤ 20 % (SW-846 6020B / 6010D), or
  the laboratory's RPD limit; the laboratory's reported RPD is used when one of the pair is not
  in the file.

The original result of a laboratory duplicate comes from the QC row (``original_result``) or
from the accepted result of its parent sample (same sample, analyte and fraction).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.verdicts import concat, edges, fmt, verdict_rows
from tracescreen.retest.labqc.windows import Window, load_windows

PAIRS = (("ms", "msd", "spike_duplicate"), ("lcs", "lcsd", "control_duplicate"))
_PAIR_KEY = ["lab", "batch", "prep_batch", "method", "analyte", "fraction"]


def rpd(a, b) -> np.ndarray:
    """Relative percent difference [%]: 100 · |a − b| / ((a + b) / 2); 0 for two zeros.

    >>> float(rpd([99900.0], [101000.0])[0])  # doctest: +ELLIPSIS
    1.0950...
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    mean = (a + b) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(mean == 0, np.where(a == b, 0.0, np.nan), 100.0 * np.abs(a - b) / mean)


def _censored(qc: pd.DataFrame, prefix: str = "") -> np.ndarray:
    """A result, or its detection limit for a non-detect [µg/L]."""
    v = qc[prefix + "result_ug_L"].to_numpy(dtype=float)
    return np.where(qc[prefix + "detected"].to_numpy(dtype=bool), v, qc[prefix + "detection_limit_ug_L"].to_numpy(dtype=float))


def parent_results(dups: pd.DataFrame, results: pd.DataFrame | None) -> pd.DataFrame:
    """The parent sample's accepted result for each duplicate row (NaN where not found)."""
    cols = ["result_ug_L", "detected", "detection_limit_ug_L"]
    empty = pd.DataFrame({c: np.full(len(dups), np.nan) for c in cols}, index=dups.index)
    if results is None or results.empty:
        return empty
    r = results.loc[results["sample_type"].astype(str) != "lab_blank",
                    ["sample_id", "analyte", "fraction", "value_ug_L", "detected", "detection_limit_ug_L"]]
    r = pd.DataFrame({"_sid": r["sample_id"].astype(str).to_numpy(), "analyte": r["analyte"].astype(str).to_numpy(),
                      "fraction": r["fraction"].astype(str).to_numpy(), "result_ug_L": r["value_ug_L"].to_numpy(float),
                      "detected": r["detected"].to_numpy(bool),
                      "detection_limit_ug_L": r["detection_limit_ug_L"].to_numpy(float)}).drop_duplicates(
        ["_sid", "analyte", "fraction"])
    key = dups["parent_sample_id"].where(dups["parent_sample_id"] != "", dups["qc_sample_id"]).astype(str)
    left = pd.DataFrame({"_sid": key.to_numpy(), "analyte": dups["analyte"].astype(str).to_numpy(),
                         "fraction": dups["fraction"].astype(str).to_numpy()})
    m = left.merge(r, on=["_sid", "analyte", "fraction"], how="left")
    m.index = dups.index
    return m[cols]


def review_lab_duplicates(qc: pd.DataFrame, results: pd.DataFrame | None = None,
                          windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for laboratory duplicates (RPD, or the absolute-difference rule near the QL)."""
    sub = qc[qc["element"] == "lab_duplicate"]
    if sub.empty:
        return concat([])
    window = (windows or load_windows())["lab_duplicate"]
    p = window.params
    parent = parent_results(sub, results)
    has_orig = sub["original_ug_L"].notna().to_numpy()
    a = np.where(has_orig, sub["original_ug_L"].to_numpy(float),
                 np.where(parent["detected"].eq(True).to_numpy(), parent["result_ug_L"],
                          parent["detection_limit_ug_L"]))
    has_dup_col = sub["duplicate_ug_L"].notna().to_numpy()
    b = np.where(has_dup_col, sub["duplicate_ug_L"].to_numpy(float), _censored(sub))
    ql_given = sub["quantitation_limit_ug_L"].to_numpy(float)
    ql = np.where(np.isfinite(ql_given), ql_given, np.fmax(sub["detection_limit_ug_L"].to_numpy(float),
                                                           parent["detection_limit_ug_L"].to_numpy(float)))
    ql_word = np.where(np.isfinite(ql_given), "QL", "DL (no quantitation limit given)")
    both_high = (a >= p["rpd_min_multiple"] * ql) & (b >= p["rpd_min_multiple"] * ql)
    lo, hi, src = edges(np.full(len(sub), np.nan), sub["rpd_limit"], window)
    value = np.where(both_high, rpd(a, b), np.abs(a - b) / ql)
    high = np.where(both_high, hi, float(p["abs_max_ql"]))
    detail = "original " + fmt(a) + ", duplicate " + fmt(b) + " µg/L, " + ql_word + " " + fmt(ql) + " µg/L"
    reported = sub["reported_rpd"].to_numpy(float)
    parts = []
    for rule_rpd in (True, False):
        m = both_high == rule_rpd
        if m.any():
            parts.append(verdict_rows(
                sub[m], window, "lab_duplicate", value[m], np.full(m.sum(), np.nan), high[m],
                np.where(rule_rpd, src[m], "guideline"), reported=reported[m] if rule_rpd else None,
                detail=detail[m] + (f" (both >= {p['rpd_min_multiple']:g} x QL)" if rule_rpd else
                                    f" (below {p['rpd_min_multiple']:g} x QL: difference in units of the limit)"),
                measure="rpd" if rule_rpd else "absolute_difference_in_ql"))
    return concat(parts)


def _pair(first: pd.DataFrame, second: pd.DataFrame) -> pd.Series:
    """Index of the first-of-pair row for each second-of-pair row (NaN where none).

    The duplicate's parent id names its partner, or both name the same parent sample; otherwise a
    group (lab, batch, preparation batch, method, analyte, fraction) with exactly one of each pairs.
    """
    f = first.assign(_i=first.index)
    s = second.assign(_j=second.index)
    out = pd.Series(np.nan, index=second.index)
    for left, right in (("parent_sample_id", "qc_sample_id"), ("parent_sample_id", "parent_sample_id")):
        m = s[s[left] != ""].merge(f[f[right] != ""][_PAIR_KEY + [right, "_i"]], left_on=_PAIR_KEY + [left],
                                   right_on=_PAIR_KEY + [right], how="inner").drop_duplicates("_j")
        out.loc[m["_j"].to_numpy()] = out.loc[m["_j"].to_numpy()].fillna(pd.Series(m["_i"].to_numpy(),
                                                                                   index=m["_j"].to_numpy()))
    left = s[out.isna().to_numpy()]
    if len(left):
        counts_f = f.groupby(_PAIR_KEY, dropna=False)["_i"].agg(["count", "first"])
        counts_s = s.groupby(_PAIR_KEY, dropna=False)["_j"].count().rename("n_s")
        g = left[_PAIR_KEY + ["_j"]].merge(counts_f.join(counts_s).reset_index(), on=_PAIR_KEY, how="left")
        ok = (g["count"] == 1) & (g["n_s"] == 1)
        out.loc[g.loc[ok, "_j"].to_numpy()] = g.loc[ok, "first"].to_numpy()
    return out


def review_pairs(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for MS/MSD and LCS/LCSD precision, one per duplicate row."""
    w = windows or load_windows()
    parts = []
    for first, second, name in PAIRS:
        f, s = qc[qc["element"] == first], qc[qc["element"] == second]
        if s.empty:
            continue
        window = w[name]
        partner = _pair(f, s)
        has = partner.notna().to_numpy()
        a = np.full(len(s), np.nan)
        a[has] = f.loc[partner[has].astype(int), "result_ug_L"].fillna(0.0).to_numpy(float)
        b = s["result_ug_L"].fillna(0.0).to_numpy(float)
        reported = s["reported_rpd"].to_numpy(float)
        computed = rpd(a, b)
        value = np.where(np.isfinite(computed), computed, reported)
        detail = np.where(has, first.upper() + " " + fmt(a) + ", " + second.upper() + " " + fmt(b) + " µg/L",
                          f"no {first.upper()} row in the file: the laboratory's RPD is used")
        detail = detail + np.where(np.isfinite(reported), "; laboratory's RPD " + fmt(reported) + " %", "")
        lo, hi, src = edges(np.full(len(s), np.nan), s["rpd_limit"], window)
        parts.append(verdict_rows(s, window, f"{first}_{second}", value, lo, hi, src, reported=reported,
                                  detail=detail, measure="rpd"))
    return concat(parts)
