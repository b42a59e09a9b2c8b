"""Screening: every accepted result against every limit entry that applies to it.

An entry applies to a result when the entry's table protects one of the site's water uses (every
table applies to every site when no sites file is given), the analyte and fraction are the same,
and the entry is in force on the sampling date. Each (result, entry) pair gives one output row; a
result with no applicable entry gives one row with status ``no_limit``.

Statuses (in order of severity, :data:`STATUSES`):

``exceeds``
    detected and value > limit.
``nondetect_inconclusive``
    not detected, but the detection limit is above the limit: the result cannot decide; a lower
    detection limit is needed. A non-detect is never an exceedance.
``meets``
    detected and value <= limit (a value equal to the limit meets it).
``nondetect_meets``
    not detected, with detection limit <= limit.
``no_limit``
    no applicable entry, or hardness unknown for a hardness-dependent entry (see ``note``).
``qc_sample``
    field blanks, lab blanks and field duplicates: quality-control samples, not screened as site
    samples (the retest checks use them).

Comparisons allow a relative tolerance of :data:`REL_TOL` so that unit conversion cannot turn an
equal value into an exceedance through binary floating-point error (0.007 mg/L is
7.000000000000001 µg/L in binary arithmetic).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from . import limits as limits_mod
from .hardness import sample_hardness
from .sites import site_uses

REL_TOL = 1e-9
STATUSES = ("exceeds", "nondetect_inconclusive", "meets", "nondetect_meets", "no_limit", "qc_sample")
STATUS_RANK = {s: i for i, s in enumerate(STATUSES)}

SCREENING_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit", "value_ug_L",
    "detected", "detection_limit_ug_L", "qualifier", "sample_type", "hardness_used_mg_L",
    "hardness_origin", "limit_table", "use", "duration", "basis", "limit_ug_L", "ratio", "status",
    "source", "note", "entry_id", "lab", "batch", "parent_sample_id", "analysed_at", "uncertainty_ug_L",
    "file", "sheet", "row",
]


def classify(detected, value_ug_L, detection_limit_ug_L, limit_ug_L, rel_tol: float = REL_TOL) -> np.ndarray:
    """Status of each result against one limit each (vectorised).

    Parameters
    ----------
    detected : array of bool
    value_ug_L, detection_limit_ug_L, limit_ug_L : array of float [µg/L]

    Returns
    -------
    numpy array of str: ``exceeds``, ``meets``, ``nondetect_meets``, ``nondetect_inconclusive``,
    or ``no_limit`` where the limit is NaN.
    """
    det = np.asarray(detected, dtype=bool)
    lim = np.asarray(limit_ug_L, dtype=float)
    bound = lim * (1.0 + rel_tol)
    with np.errstate(invalid="ignore"):
        over = np.where(det, np.asarray(value_ug_L, float) > bound, np.asarray(detection_limit_ug_L, float) > bound)
    out = np.where(det, np.where(over, "exceeds", "meets"),
                   np.where(over, "nondetect_inconclusive", "nondetect_meets")).astype(object)
    out[np.isnan(lim)] = "no_limit"
    return out


def _codes(values: pd.Series, categories: pd.Index) -> np.ndarray:
    return categories.get_indexer(values)


def applicable_pairs(results: pd.DataFrame, limits: limits_mod.LimitSet,
                     sites: pd.DataFrame | None) -> tuple[np.ndarray, np.ndarray]:
    """Result positions and entry positions of every (result, single-sample entry) candidate pair.

    Candidates share site use, analyte and fraction; dates are checked by :func:`screen`.
    """
    entries = limits.entries
    e_ok = (entries["basis"] == "single_sample").to_numpy()
    site_code, site_cat = pd.factorize(results["site_id"])
    ana_code, ana_cat = pd.factorize(results["analyte"])
    fr_code, fr_cat = pd.factorize(results["fraction"])
    n_a, n_f = max(len(ana_cat), 1), max(len(fr_cat), 1)
    r_key = (site_code.astype(np.int64) * n_a + ana_code) * n_f + fr_code

    e_idx = np.flatnonzero(e_ok)
    if sites is None:
        su = pd.DataFrame({"site_id": np.repeat(site_cat.to_numpy(), len(limits.tables)),
                           "use": np.tile(limits.tables["use"].to_numpy(), len(site_cat))})
    else:
        su = site_uses(sites)
    ent = entries.iloc[e_idx][["use", "analyte", "fraction"]].assign(_e=e_idx)
    pairs = su.drop_duplicates().merge(ent, on="use")
    p_site = _codes(pairs["site_id"], pd.Index(site_cat))
    p_ana = _codes(pairs["analyte"], pd.Index(ana_cat))
    p_fr = _codes(pairs["fraction"], pd.Index(fr_cat))
    keep = (p_site >= 0) & (p_ana >= 0) & (p_fr >= 0)
    p_key = ((p_site.astype(np.int64) * n_a + p_ana) * n_f + p_fr)[keep]
    p_entry = pairs["_e"].to_numpy()[keep]
    order = np.argsort(p_key, kind="stable")
    p_key, p_entry = p_key[order], p_entry[order]
    start = np.searchsorted(p_key, r_key, side="left")
    stop = np.searchsorted(p_key, r_key, side="right")
    counts = stop - start
    r_pos = np.repeat(np.arange(len(results)), counts)
    offsets = np.arange(len(r_pos)) - np.repeat(np.cumsum(counts) - counts, counts)
    e_pos = p_entry[np.repeat(start, counts) + offsets]
    return r_pos, e_pos


def screen(results: pd.DataFrame, limits: limits_mod.LimitSet, sites: pd.DataFrame | None = None,
           rel_tol: float = REL_TOL) -> pd.DataFrame:
    """Screen accepted results against limit tables.

    Parameters
    ----------
    results : DataFrame
        Accepted results (contract columns, see DEVELOPERS.md), concentrations in µg/L.
    limits : LimitSet
        Loaded limit tables.
    sites : DataFrame, optional
        Sites with their water uses and default hardness; without it every table applies to every
        site.
    rel_tol : float
        Relative tolerance of the comparison (default :data:`REL_TOL`).

    Returns
    -------
    DataFrame
        :data:`SCREENING_COLUMNS`: one row per (result, applicable entry), or one ``no_limit`` /
        ``qc_sample`` row for a result without one. ``ratio`` is value/limit for a detect and
        detection limit/limit for a non-detect.
    """
    results = results.reset_index(drop=True)
    n = len(results)
    hard = sample_hardness(results, sites)
    qc = (results["sample_type"] != "sample").to_numpy()
    r_pos, e_pos = applicable_pairs(results, limits, sites)
    keep = ~qc[r_pos]
    r_pos, e_pos = r_pos[keep], e_pos[keep]
    had_candidate = np.zeros(n, dtype=bool)
    had_candidate[r_pos] = True

    entries = limits.entries
    ent = entries.iloc[e_pos].reset_index(drop=True)
    day = results["sampled_at"].to_numpy(dtype="datetime64[ns]")[r_pos].astype("datetime64[D]")
    lo = ent["effective_from"].to_numpy(dtype="datetime64[ns]").astype("datetime64[D]")
    hi = ent["effective_to"].to_numpy(dtype="datetime64[ns]").astype("datetime64[D]")
    in_force = (np.isnat(lo) | (day >= lo)) & (np.isnat(hi) | (day <= hi))
    r_pos, e_pos, ent = r_pos[in_force], e_pos[in_force], ent[in_force].reset_index(drop=True)

    covered = np.zeros(n, dtype=bool)
    covered[r_pos] = True
    lone = np.flatnonzero(~covered)

    H = hard["hardness_used_mg_L"].to_numpy()[r_pos]
    limit = limits_mod.evaluate(ent, H)
    formula = limits_mod.is_formula(ent)

    det = results["detected"].to_numpy(dtype=bool)
    val = results["value_ug_L"].to_numpy(dtype=float)
    dl = results["detection_limit_ug_L"].to_numpy(dtype=float)
    status = classify(det[r_pos], val[r_pos], dl[r_pos], limit, rel_tol)
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(det[r_pos], val[r_pos], dl[r_pos]) / limit

    note = ent["note"].to_numpy(dtype=object).copy()
    hmin, hmax = ent["hardness_min"].to_numpy(float), ent["hardness_max"].to_numpy(float)
    with np.errstate(invalid="ignore"):
        clamp_lo = formula & (H < hmin)
        clamp_hi = formula & (H > hmax)
    msg = np.full(len(r_pos), "", dtype=object)
    msg[formula] = "hardness-dependent limit"
    msg[clamp_lo] = "hardness-dependent limit; hardness raised to the formula's minimum"
    msg[clamp_hi] = "hardness-dependent limit; hardness capped at the formula's maximum"
    msg[formula & np.isnan(H)] = "hardness unknown: hardness-dependent limit not computed"
    note = np.where(msg == "", note, np.where(note == "", msg, msg + "; " + note.astype(str)))

    lone_status = np.where(qc[lone], "qc_sample", "no_limit").astype(object)
    st = results["sample_type"].to_numpy(dtype=object)[lone]
    lone_note = np.where(qc[lone], np.char.add(st.astype(str), ": quality-control sample, not screened against limits"),
                         np.where(had_candidate[lone], "no limit entry in force on the sampling date",
                                  "no limit for this analyte and fraction in the tables for this site's uses"))

    rp = np.concatenate([r_pos, lone])
    out = results.iloc[rp].reset_index(drop=True)
    out["hardness_used_mg_L"] = hard["hardness_used_mg_L"].to_numpy()[rp]
    out["hardness_origin"] = hard["hardness_origin"].to_numpy()[rp]

    def joined(a, fill):
        return np.concatenate([np.asarray(a, dtype=object), np.full(len(lone), fill, dtype=object)])

    out["limit_table"] = joined(ent["table_id"], "")
    out["use"] = joined(ent["use"], "")
    out["duration"] = joined(ent["duration"], "")
    out["basis"] = joined(ent["basis"], "")
    out["limit_ug_L"] = np.concatenate([limit, np.full(len(lone), np.nan)])
    out["ratio"] = np.concatenate([ratio, np.full(len(lone), np.nan)])
    out["status"] = np.concatenate([status, lone_status])
    out["source"] = joined(ent["source"], "")
    out["note"] = np.concatenate([note, lone_note]).astype(object)
    out["entry_id"] = joined(ent["entry_id"], "")
    for c in ("limit_table", "use", "duration", "basis", "status", "source", "note", "entry_id", "hardness_origin"):
        out[c] = out[c].astype(str)
    order = np.argsort(rp, kind="stable")  # back to input order; a result's entries stay in table order
    out = out.iloc[order].reset_index(drop=True)
    return out[SCREENING_COLUMNS]


def worst_status(screened: pd.DataFrame, by: list[str]) -> pd.DataFrame:
    """Most severe status per group (severity order :data:`STATUSES`), with the count of rows."""
    rank = screened["status"].map(STATUS_RANK)
    g = screened.assign(_rank=rank).groupby(by, observed=True, sort=True)
    out = g["_rank"].agg(["min", "size"]).reset_index()
    out["worst_status"] = np.asarray(STATUSES, dtype=object)[out["min"].to_numpy()]
    return out.drop(columns="min").rename(columns={"size": "n_rows"})
