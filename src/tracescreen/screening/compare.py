"""Screening: every accepted result against every limit entry that applies to it.

An entry applies to a result when the entry's table protects one of the site's water uses (every
table applies to every site when no sites file is given), the analyte and fraction are the same,
and the entry is in force on the sampling date. Each (result, entry) pair gives one output row; a
result with no applicable entry gives one row with status ``no_limit``.

The statuses, their order of severity and the comparison tolerance are defined once, in
:mod:`tracescreen.vocabulary` (``exceeds``, ``above_range_inconclusive``,
``nondetect_inconclusive``, ``meets``, ``nondetect_meets``, ``no_limit``, ``qc_sample``).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.screening import decision, fractions, frequency
from tracescreen.screening import periods
from tracescreen.limits import forms, load as limits_mod, scope
from tracescreen.screening.hardness import sample_hardness
from tracescreen.screening.inputs import USED_COLUMNS, sample_inputs
from tracescreen._internal.memory import release_unused
from tracescreen.io.sites import site_uses

from tracescreen.vocabulary import REL_TOL, STATUS_CODE as STATUS_RANK, STATUSES  # noqa: F401 (re-exported)

SCREENING_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit", "value_ug_L",
    "detected", "detection_limit_ug_L", "qualifier", "qualifier_meaning", "sample_type", "hardness_used_mg_L",
    "hardness_origin", "limit_table", "use", "duration", "basis", "limit_ug_L", "ratio", "status",
    "source", "note", "entry_id", "lab", "batch", "parent_sample_id", "analysed_at", "uncertainty_ug_L",
    "file", "sheet", "row", "compared_value_ug_L", "period_id", "period_value_ug_L", "limit_fraction",
    "ph_used", "doc_used_mg_L", "temperature_used_C", "limit_scope",
]


def classify(detected, value_ug_L, detection_limit_ug_L, limit_ug_L, rel_tol: float = REL_TOL,
             above_range=None) -> np.ndarray:
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
    return np.asarray(STATUSES, dtype=object)[status_codes(detected, value_ug_L, detection_limit_ug_L, limit_ug_L,
                                                           rel_tol, above_range)]


def _codes(values: pd.Series, categories: pd.Index) -> np.ndarray:
    return categories.get_indexer(values)


def applicable_pairs(results: pd.DataFrame, limits: limits_mod.LimitSet,
                     sites: pd.DataFrame | None) -> tuple[np.ndarray, np.ndarray]:
    """Result positions and entry positions of every (result, entry) candidate pair.

    Candidates share site use, analyte and fraction; dates are checked by :func:`screen`.
    """
    entries = limits.entries
    e_ok = np.ones(len(entries), dtype=bool)  # every basis; period bases are decided by periods.py
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
    pairs = pairs[scope.keep_pairs(pairs, entries, limits.tables, sites)]
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
           rel_tol: float = REL_TOL, cross_fraction: bool = True) -> pd.DataFrame:
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
    cross_fraction : bool
        Decide across fractions where that is certain (a dissolved result above a total limit
        exceeds it; a total result within a dissolved criterion meets it; see
        :mod:`tracescreen.screening.fractions`). Default True.

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
    entries = limits.entries
    r_pos, e_pos = applicable_pairs(results, limits, sites)
    cross = np.zeros(len(r_pos), dtype=bool)
    if cross_fraction:
        r_x, e_x = applicable_pairs(fractions.swapped(results), limits, sites)
        keep_x = fractions.lacks_other_fraction(results)[r_x] & \
            (entries["basis"].astype(str).to_numpy(dtype=object)[e_x] == "single_sample")
        r_x, e_x = r_x[keep_x], e_x[keep_x]
        r_pos, e_pos = np.concatenate([r_pos, r_x]), np.concatenate([e_pos, e_x])
        cross = np.concatenate([cross, np.ones(len(r_x), dtype=bool)])
    keep = ~qc[r_pos]
    r_pos, e_pos, cross = r_pos[keep], e_pos[keep], cross[keep]
    had_candidate = np.zeros(n, dtype=bool)
    had_candidate[r_pos[~cross]] = True

    num = entries[NUMERIC_ENTRY_COLUMNS]  # only numbers are taken per pair; text is coded below
    day = _days(results["sampled_at"])[r_pos]
    lo = _days(entries["effective_from"])[e_pos]
    hi = _days(entries["effective_to"])[e_pos]
    in_force = ((lo == _NAT_DAY) | (day >= lo)) & ((hi == _NAT_DAY) | (day <= hi))
    r_pos, e_pos, cross = r_pos[in_force], e_pos[in_force], cross[in_force]

    H = hard["hardness_used_mg_L"].to_numpy()[r_pos]
    chem = sample_inputs(results, sites)
    limit = num["value_ug_L"].to_numpy(dtype=float)[e_pos]
    formula = limits_mod.is_formula(entries)[e_pos]
    fi = np.flatnonzero(formula)  # computed limits: evaluated for these pairs only
    form_remark = np.zeros(len(r_pos), dtype=np.int64)
    pair_inputs = {"hardness": H[fi], **{k: v[r_pos[fi]] for k, (v, _) in chem.items()}}
    limit[fi], form_remark[fi] = limits_mod.evaluate_pairs(entries, e_pos[fi], pair_inputs)
    limit[fi] = _round_criteria(limit[fi], e_pos[fi], entries, limits.tables)

    det = results["detected"].to_numpy(dtype=bool)
    val = results["value_ug_L"].to_numpy(dtype=float)
    dl = results["detection_limit_ug_L"].to_numpy(dtype=float)
    above = _above_range(results)
    status = status_codes(det[r_pos], val[r_pos], dl[r_pos], limit, rel_tol, above[r_pos])
    if cross.any():  # cross-fraction pairs stay only where they decide (screening/fractions.py)
        e_frac = entries["fraction"].astype(str).to_numpy(dtype=object)[e_pos]
        stay = ~cross | fractions.deciding(status, e_frac)
        r_pos, e_pos, cross, H, limit, status, form_remark = (
            a[stay] for a in (r_pos, e_pos, cross, H, limit, status, form_remark))
        formula = limits_mod.is_formula(entries)[e_pos]
        fi = np.flatnonzero(formula)
    ent = num.iloc[e_pos[fi]]

    covered = np.zeros(n, dtype=bool)
    covered[r_pos] = True
    lone = np.flatnonzero(~covered)
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(det[r_pos], val[r_pos], dl[r_pos]) / limit

    # note = hardness remark (code 0-4) combined with the entry's own note
    remark = np.zeros(len(r_pos), dtype=np.int64)
    with np.errstate(invalid="ignore"):
        h = H[fi]
        remark[fi] = np.select([np.isnan(h), h > ent["hardness_max"].to_numpy(float),
                                h < ent["hardness_min"].to_numpy(float)], [4, 3, 2], 1)
    has_form = entries["form"].notna().to_numpy(dtype=bool)[e_pos] if "form" in entries else np.zeros(len(e_pos), bool)
    remark[has_form] = len(HARDNESS_REMARKS) + form_remark[has_form]  # limits/forms.py remarks follow
    n_lone_kinds = 2 + len(QC_NOTES)
    qc_kind = results["sample_type"].map({k: i for i, k in enumerate(QC_NOTES)}).to_numpy(dtype=float)
    lone_kind = np.where(qc[lone], 2 + np.nan_to_num(qc_kind[lone], nan=0).astype(np.int64),
                         np.where(had_candidate[lone], 0, 1))
    n_remarks = len(HARDNESS_REMARKS) + len(forms.REMARKS)
    note_key = np.concatenate([(e_pos * n_remarks + remark) * 2 + cross, -1 - lone_kind])

    rp = np.concatenate([r_pos, lone])
    order = np.argsort(rp, kind="stable")  # back to input order; a result's entries stay in table order
    rp = rp[order]
    e_all = np.concatenate([e_pos, np.full(len(lone), -1)])[order]
    cols = {}
    for c in results.columns:  # take by position; text columns as categoricals (integer take)
        if c in SCREENING_COLUMNS:
            cols[c] = take_column(results[c], rp)
    cols["hardness_used_mg_L"] = hard["hardness_used_mg_L"].to_numpy()[rp]
    cols["hardness_origin"] = take_column(hard["hardness_origin"], rp)
    for c, src in (("limit_table", "table_id"), ("use", "use"), ("duration", "duration"), ("basis", "basis"),
                   ("entry_id", "entry_id")):
        cols[c] = entry_attribute(entries[src], e_all)
    # the table's title stands for its citation on each row; full citations: LimitSet.tables
    cols["source"] = entry_attribute(entries["table_id"].map(limits.tables.set_index("table_id")["name"]), e_all)
    cols["limit_ug_L"] = np.concatenate([limit, np.full(len(lone), np.nan)])[order]
    cols["ratio"] = np.concatenate([ratio, np.full(len(lone), np.nan)])[order]
    lone_status = np.where(qc[lone], STATUS_RANK["qc_sample"], STATUS_RANK["no_limit"])
    cols["status"] = pd.Categorical.from_codes(np.concatenate([status, lone_status])[order].astype(np.int8),
                                               categories=list(STATUSES))
    cols["note"] = _notes(note_key[order], entries["note"].astype(str).to_numpy(dtype=object), n_lone_kinds,
                          entries["fraction"].astype(str).to_numpy(dtype=object),
                          entries["inputs"].astype(str).to_numpy(dtype=object) if "inputs" in entries else None)
    for k, c in USED_COLUMNS.items():
        cols[c] = chem[k][0][rp]
    cols["limit_scope"] = entry_attribute(entries["scope"] if "scope" in entries else pd.Series([""] * len(entries)),
                                          e_all)
    cols["limit_fraction"] = entry_attribute(entries["fraction"], e_all)
    cols["compared_value_ug_L"] = np.full(len(rp), np.nan)
    cols["period_id"] = pd.arrays.IntegerArray(np.zeros(len(rp), dtype=np.int64),  # periods.py fills period rows
                                               np.ones(len(rp), dtype=bool))
    cols["period_value_ug_L"] = np.full(len(rp), np.nan)
    if "qualifier_meaning" not in cols:  # results built before qualifiers were read (older frames)
        cols["qualifier_meaning"] = pd.Categorical(np.full(len(rp), "", dtype=object))
    # copy=False: one block per column, nothing copied or consolidated (a screening table is large)
    out = pd.DataFrame({c: cols[c] for c in SCREENING_COLUMNS}, copy=False)
    out = frequency.apply_sampling_frequency(out, limits)  # yearly-or-less points: each result decides
    out = decision.apply_rounding(out, limits)  # tables that compare after rounding
    out = periods.apply_period_statuses(out, limits)  # running annual means and percentiles
    release_unused()
    return out


NUMERIC_ENTRY_COLUMNS = ["value_ug_L", "hf_m", "hf_b", "hf_cf", "hf_cf_intercept", "hf_cf_ln_slope",
                         "hardness_min", "hardness_max", "unit_factor"]
HARDNESS_REMARKS = ("", "hardness-dependent limit",
                    "hardness-dependent limit; hardness raised to the formula's minimum",
                    "hardness-dependent limit; hardness capped at the formula's maximum",
                    "hardness unknown: hardness-dependent limit not computed")
LONE_NOTES = ("no limit entry in force on the sampling date",
              "no limit for this analyte and fraction in the tables for this site's uses")
QC_NOTES = ("field_duplicate", "field_blank", "lab_blank")
_NAT_DAY = np.iinfo(np.int64).min


def _round_criteria(limit: np.ndarray, e_pos: np.ndarray, entries: pd.DataFrame, tables: pd.DataFrame) -> np.ndarray:
    """Computed criteria rounded to the table's ``criteria_significant_figures`` where it sets one
    (e.g. 40 CFR 131.38(b)(2): "Final CMC and CCC values should be rounded to two significant figures")."""
    figures = {t: (s or {}).get("criteria_significant_figures") for t, s in zip(tables["table_id"], tables["settings"])}
    if not any(v for v in figures.values()):
        return limit
    per_entry = entries["table_id"].map(figures).astype(float).to_numpy()
    return decision.round_significant(limit, per_entry[e_pos])


def _days(dates: pd.Series) -> np.ndarray:
    """Whole days since 1970 as int64 (NaT stays the int64 minimum), for fast date comparisons."""
    ns = pd.to_datetime(dates).astype("datetime64[ns]").to_numpy().view(np.int64)
    return np.where(ns == _NAT_DAY, _NAT_DAY, np.floor_divide(ns, 86_400_000_000_000))


def _notes(keys: np.ndarray, entry_notes: np.ndarray, n_lone_kinds: int, entry_fractions: np.ndarray,
           entry_inputs: np.ndarray | None = None) -> pd.Categorical:
    """Note text per row from its key (entry x limit remark x cross-fraction, or a no-limit /
    QC kind), built per distinct key."""
    inv, uniq = pd.factorize(keys)
    text = []
    for k in uniq:  # a handful of distinct keys, not rows
        if k < 0:
            kind = -1 - k
            text.append(LONE_NOTES[kind] if kind < 2 else
                        f"{QC_NOTES[kind - 2]}: quality-control sample, not screened against limits")
            continue
        e_r, x = divmod(int(k), 2)
        e, r = divmod(e_r, len(HARDNESS_REMARKS) + len(forms.REMARKS))
        if r < len(HARDNESS_REMARKS):
            remark = HARDNESS_REMARKS[r]
        else:
            used = ", ".join(forms.INPUTS[i][0] for i in str(entry_inputs[e]).split(",") if i)
            remark = forms.REMARKS[r - len(HARDNESS_REMARKS)] or (f"limit computed from {used}" if used else "")
        parts = [p for p in (fractions.CROSS_NOTES.get(entry_fractions[e], "") if x else "",
                             remark, entry_notes[e]) if p]
        text.append("; ".join(parts))
    cats, inv2 = np.unique(np.array(text, dtype=object).astype(str), return_inverse=True)
    return pd.Categorical.from_codes(inv2[inv], categories=cats)


def status_codes(detected, value_ug_L, detection_limit_ug_L, limit_ug_L, rel_tol: float = REL_TOL,
                 above_range=None) -> np.ndarray:
    """Like :func:`classify`, as positions in :data:`STATUSES` (int8).

    ``above_range`` (bool per result, optional) marks results reported above the calibrated range
    (``>x``, value x): the true value is at least x, so x above the limit is a certain exceedance
    and x at or below it cannot decide (``above_range_inconclusive``).
    """
    det = np.asarray(detected, dtype=bool)
    lim = np.asarray(limit_ug_L, dtype=float)
    bound = lim * (1.0 + rel_tol)
    with np.errstate(invalid="ignore"):
        over = np.where(det, np.asarray(value_ug_L, float) > bound, np.asarray(detection_limit_ug_L, float) > bound)
    c = STATUS_RANK
    code = np.where(det, np.where(over, c["exceeds"], c["meets"]),
                    np.where(over, c["nondetect_inconclusive"], c["nondetect_meets"])).astype(np.int8)
    if above_range is not None:
        code[np.asarray(above_range, dtype=bool) & det & ~over] = c["above_range_inconclusive"]
    code[np.isnan(lim)] = c["no_limit"]
    return code


def _above_range(results: pd.DataFrame) -> np.ndarray:
    """Results reported above the calibrated range (meaning ``above_range``, see io/qualifiers)."""
    if "qualifier_meaning" not in results.columns:
        return np.zeros(len(results), dtype=bool)
    from tracescreen.io.qualifiers import has_meaning

    codes, uniq = pd.factorize(results["qualifier_meaning"])  # per distinct text, not per row
    hit = has_meaning(np.asarray(uniq, dtype=object).astype(str), {"above_range"})
    return np.where(codes >= 0, hit[np.maximum(codes, 0)] if len(hit) else False, False)


def take_column(col: pd.Series, positions: np.ndarray):
    """Values of ``col`` at ``positions``; text columns come back as categoricals (fast integer take)."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        return pd.Categorical.from_codes(col.cat.codes.to_numpy()[positions], dtype=col.dtype)
    if pd.api.types.is_string_dtype(col.dtype) or col.dtype == object:
        codes, uniques = pd.factorize(col.fillna(""), use_na_sentinel=False)  # missing text is ""
        return pd.Categorical.from_codes(codes[positions], categories=pd.Index(uniques, dtype=object).astype(str))
    return col.to_numpy()[positions]


def entry_attribute(values: pd.Series, e_pos: np.ndarray) -> pd.Categorical:
    """Attribute of the entry at each position (-1: no entry -> empty text), as a categorical."""
    text = values.astype(str).to_numpy(dtype=object)
    cats, inv = np.unique(np.append(text, ""), return_inverse=True)
    codes = inv[np.where(e_pos < 0, len(text), e_pos)]
    return pd.Categorical.from_codes(codes, categories=cats.astype(str))


def worst_status(screened: pd.DataFrame, by: list[str]) -> pd.DataFrame:
    """Most severe status per group (severity order :data:`STATUSES`), with the count of rows.

    For an overview of a site with several uses, where every applicable table gives a row: group
    by result (``["site_id", "sample_id", "analyte", "fraction"]``), by site and analyte, or by site.
    ``worst_limit_table`` and ``worst_ratio`` come from the row that sets the worst status (the
    highest ratio among rows of that status).
    """
    rank = screened["status"].map(STATUS_RANK).astype(int)
    ratio = screened["ratio"] if "ratio" in screened else pd.Series(np.nan, index=screened.index)
    ordered = screened.assign(_rank=rank, _ratio=ratio.fillna(-np.inf)).sort_values(
        ["_rank", "_ratio"], ascending=[True, False], kind="stable")
    g = ordered.groupby(by, observed=True, sort=True)
    out = g.agg(_rank=("_rank", "first"), n_rows=("_rank", "size"),
                worst_limit_table=("limit_table", "first"), worst_ratio=("ratio", "first")).reset_index()
    out.insert(len(by), "worst_status", np.asarray(STATUSES, dtype=object)[out.pop("_rank").to_numpy()])
    return out
