"""Screening: every accepted result against every limit entry that applies to it.

Each (result, applicable entry) pair gives one output row (:mod:`tracescreen.screening.applicability`
says which entries apply); a result with no applicable entry gives one row with status
``no_limit``, a quality-control sample one row ``qc_sample``. Each pair's limit is the entry's
value or its hardness formula at the sample's hardness (:mod:`tracescreen.screening.hardness`), and
its status follows the status rule (:mod:`tracescreen.screening.status`); tables that compare after
rounding are re-decided by :mod:`tracescreen.screening.rounding` and entries with a period basis by
:mod:`tracescreen.screening.periods`.

The statuses, their order of severity and the comparison tolerance are defined once, in
:mod:`tracescreen.vocabulary`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.frames import entry_attribute, take_column
from tracescreen._internal.memory import release_unused
from tracescreen.limits import forms
from tracescreen.limits import load as limits_mod
from tracescreen.limits.in_force import round_criteria
from tracescreen.screening import fractions, frequency, periods, rounding
from tracescreen.screening.applicability import candidate_pairs, in_force
from tracescreen.screening.hardness import sample_hardness
from tracescreen.screening.inputs import USED_COLUMNS, sample_inputs
from tracescreen.screening.status import above_range, status_codes
from tracescreen.vocabulary import REL_TOL, STATUS_CODE, STATUSES

SCREENING_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit", "value_ug_L",
    "detected", "detection_limit_ug_L", "qualifier", "qualifier_meaning", "sample_type", "hardness_used_mg_L",
    "hardness_origin", "limit_table", "use", "duration", "basis", "limit_ug_L", "ratio", "status",
    "source", "note", "entry_id", "lab", "batch", "parent_sample_id", "analysed_at", "uncertainty_ug_L",
    "file", "sheet", "row", "compared_value_ug_L", "period_id", "period_value_ug_L", "limit_fraction",
    "ph_used", "doc_used_mg_L", "temperature_used_C", "limit_scope",
]


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
    out = periods.apply_period_statuses(_screen_rows(results, limits, sites, rel_tol, cross_fraction), limits)
    release_unused()
    return out


def _screen_rows(results: pd.DataFrame, limits, sites, rel_tol: float, cross_fraction: bool) -> pd.DataFrame:
    """Every (result, entry) row with its single-result status (and rounding); period rules not yet applied."""
    results = results.reset_index(drop=True)
    n = len(results)
    hard = sample_hardness(results, sites)
    qc = (results["sample_type"] != "sample").to_numpy()
    entries = limits.entries
    r_pos, e_pos, r_x, e_x = candidate_pairs(results, limits, sites, cross_fraction)
    cross = np.zeros(len(r_pos), dtype=bool)
    if cross_fraction:
        r_pos, e_pos = np.concatenate([r_pos, r_x]), np.concatenate([e_pos, e_x])
        cross = np.concatenate([cross, np.ones(len(r_x), dtype=bool)])
    keep = ~qc[r_pos]  # quality-control samples are not screened
    had_candidate = np.zeros(n, dtype=bool)
    had_candidate[r_pos[keep & ~cross]] = True

    num = entries[NUMERIC_ENTRY_COLUMNS]  # only numbers are taken per pair; text is coded below
    keep &= in_force(results, entries, r_pos, e_pos)
    r_pos, e_pos, cross = r_pos[keep], e_pos[keep], cross[keep]

    chem = sample_inputs(results, sites)
    limit = num["value_ug_L"].to_numpy(dtype=float)[e_pos]
    fi = np.flatnonzero(limits_mod.is_formula(entries)[e_pos])  # computed limits: evaluated for these pairs only,
    e_fi, h_fi = e_pos[fi], hard["hardness_used_mg_L"].to_numpy()[r_pos[fi]]  # their values held for them only
    pair_inputs = {"hardness": h_fi, **{k: v[r_pos[fi]] for k, (v, _) in chem.items()}}
    lim_fi, form_remark = limits_mod.evaluate_pairs(entries, e_fi, pair_inputs)
    lim_fi, form_remark = np.array(lim_fi, dtype=float), np.asarray(form_remark, dtype=np.int64)
    with np.errstate(invalid="ignore"):  # a computed limit that is infinite or not above 0
        unusable = ~np.isnan(lim_fi) & ~(np.isfinite(lim_fi) & (lim_fi > 0))
    lim_fi[unusable] = np.nan  # never all-"meets" (infinite) or all-"exceeds" (0): no limit, and the note says why
    limit[fi] = round_criteria(lim_fi, e_fi, entries, limits.tables)

    det = results["detected"].to_numpy(dtype=bool)
    val = results["value_ug_L"].to_numpy(dtype=float)
    dl = results["detection_limit_ug_L"].to_numpy(dtype=float)
    above = above_range(results)
    status = status_codes(det[r_pos], val[r_pos], dl[r_pos], limit, rel_tol, above[r_pos])
    if cross.any():  # cross-fraction pairs stay only where they decide (screening/fractions.py)
        ci = np.flatnonzero(cross)  # only these pairs are decided (the others stay)
        stay = ~cross
        stay[ci] = fractions.deciding(status[ci], entries["fraction"].astype(str).to_numpy(dtype=object)[e_pos[ci]])
        r_pos, e_pos, cross, limit, status = (a[stay] for a in (r_pos, e_pos, cross, limit, status))
        kept = stay[fi]
        fi = (np.cumsum(stay) - 1)[fi[kept]]
        e_fi, h_fi, form_remark, unusable = e_fi[kept], h_fi[kept], form_remark[kept], unusable[kept]
    ent = num.iloc[e_fi]

    covered = np.zeros(n, dtype=bool)
    covered[r_pos] = True
    lone = np.flatnonzero(~covered)
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(det[r_pos], val[r_pos], dl[r_pos]) / limit

    # note = hardness remark (code 0-4) combined with the entry's own note
    remark = np.zeros(len(r_pos), dtype=np.int64)
    with np.errstate(invalid="ignore"):
        remark_fi = np.select([np.isnan(h_fi), h_fi > ent["hardness_max"].to_numpy(float),
                               h_fi < ent["hardness_min"].to_numpy(float)], [4, 3, 2], 1)
    if "form" in entries:  # (an entry with a form is a computed limit)
        has_form = entries["form"].notna().to_numpy(dtype=bool)[e_fi]
        remark_fi[has_form] = len(HARDNESS_REMARKS) + form_remark[has_form]  # limits/forms.py remarks follow
    remark_fi[unusable] = HARDNESS_REMARKS.index(UNUSABLE_REMARK)
    remark[fi] = remark_fi
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
    lone_status = np.where(qc[lone], STATUS_CODE["qc_sample"], STATUS_CODE["no_limit"])
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
    return rounding.apply_rounding(out, limits)  # tables that compare after rounding


def screen_with_periods(results: pd.DataFrame, limits: limits_mod.LimitSet, sites: pd.DataFrame | None = None,
                        rel_tol: float = REL_TOL, cross_fraction: bool = True,
                        with_results: bool = True) -> tuple[pd.DataFrame, pd.DataFrame]:
    """:func:`screen` and the periods table (``periods.csv``) from one evaluation of the period rules.

    ``with_results`` lists, per period value, the results that formed it (column ``results``).
    """
    out, table = periods.period_statuses(_screen_rows(results, limits, sites, rel_tol, cross_fraction), limits,
                                         with_table=True, with_results=with_results)
    release_unused()
    return out, table


NUMERIC_ENTRY_COLUMNS = ["value_ug_L", "hf_m", "hf_b", "hf_cf", "hf_cf_intercept", "hf_cf_ln_slope",
                         "hardness_min", "hardness_max", "unit_factor"]
UNUSABLE_REMARK = "computed limit not usable at this sample's inputs (infinite or not above 0): not applied"
HARDNESS_REMARKS = ("", "hardness-dependent limit",
                    "hardness-dependent limit; hardness raised to the formula's minimum",
                    "hardness-dependent limit; hardness capped at the formula's maximum",
                    "hardness unknown: hardness-dependent limit not computed",
                    UNUSABLE_REMARK)
LONE_NOTES = ("no limit entry in force on the sampling date",
              "no limit for this analyte and fraction in the tables for this site's uses")
QC_NOTES = ("field_duplicate", "field_blank", "lab_blank")


def _notes(keys: np.ndarray, entry_notes: np.ndarray, n_lone_kinds: int, entry_fractions: np.ndarray,
           entry_inputs: np.ndarray | None = None) -> pd.Categorical:
    """Note text per row from its key (entry x limit remark x cross-fraction, or a no-limit /
    QC kind), built per distinct key."""
    inv, uniq = _dense_codes(keys)
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
    return pd.Categorical.from_codes(inv2.ravel()[inv], categories=cats)


def _dense_codes(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Codes and distinct values of integer keys of a small range (a table, not a hash per row)."""
    if not len(keys):
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    low = int(keys.min())
    present = np.bincount(keys - low) > 0
    return (np.cumsum(present) - 1)[keys - low], np.flatnonzero(present) + low
