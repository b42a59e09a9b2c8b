"""Which limit entries apply to which results.

An entry applies to a result when the entry's table protects one of the site's water uses (every
table applies to every site when no sites file is given), the analyte and fraction are the same,
and the entry is in force on the sampling date (``effective_from`` / ``effective_to``, inclusive
days). Across fractions (total >= dissolved) an entry of the other fraction may decide too:
:mod:`tracescreen.screening.fractions`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.io.sites import site_uses
from tracescreen.limits import scope
from tracescreen.screening import fractions

#: int64 day number of a missing date (NaT)
NAT_DAY = np.iinfo(np.int64).min


def _codes(values: pd.Series, categories: pd.Index) -> np.ndarray:
    return categories.get_indexer(values)


def _coded(values: pd.Series) -> tuple[np.ndarray, pd.Index]:
    """Integer codes of a column and the values they stand for (-1: missing): a categorical's own codes."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        return values.cat.codes.to_numpy(), values.cat.categories
    return pd.factorize(values)


def applicable_pairs(results: pd.DataFrame, limits, sites: pd.DataFrame | None) -> tuple[np.ndarray, np.ndarray]:
    """Result positions and entry positions of every (result, entry) candidate pair.

    Candidates share site use, analyte and fraction; dates are checked by :func:`in_force`.

    Parameters
    ----------
    results : DataFrame
        Accepted results (``site_id, analyte, fraction``).
    limits : LimitSet
        Loaded limit tables.
    sites : DataFrame or None
        Sites with their uses; None: every table applies to every site.

    Returns
    -------
    (r_pos, e_pos) : two int arrays of equal length
        Positions in ``results`` and in ``limits.entries``, grouped by result in input order.
    """
    return candidate_pairs(results, limits, sites, cross_fraction=False)[:2]


def cross_fraction_pairs(results: pd.DataFrame, limits, sites: pd.DataFrame | None) -> tuple[np.ndarray, np.ndarray]:
    """Candidate pairs of results with single-sample entries of the other fraction.

    Only for results whose sample has no result of the entry's own fraction for that analyte
    (:func:`tracescreen.screening.fractions.lacks_other_fraction`); whether a pair decides is known
    only after comparison (:func:`tracescreen.screening.fractions.deciding`).
    """
    return candidate_pairs(results, limits, sites, cross_fraction=True, own=False)[2:]


def candidate_pairs(results: pd.DataFrame, limits, sites: pd.DataFrame | None, cross_fraction: bool = True,
                    own: bool = True) -> tuple[np.ndarray, ...]:
    """:func:`applicable_pairs` (``own``) and :func:`cross_fraction_pairs` (``cross_fraction``) from one
    table of the entries each (site, analyte, fraction) key has: ``(r_pos, e_pos, r_x, e_x)`` (empty
    arrays for a set not asked for)."""
    entries = limits.entries
    site_code, site_cat = _coded(results["site_id"])
    ana_code, ana_cat = _coded(results["analyte"])
    fr_code, fr_cat = _coded(results["fraction"])
    fr_text = [str(f) for f in fr_cat]
    fr_index = pd.Index(fr_text + [f for f in dict.fromkeys(fractions.other_fractions(fr_text)) if f not in fr_text])
    n_a, n_f = max(len(ana_cat), 1), max(len(fr_index), 1)

    if sites is None:
        su = pd.DataFrame({"site_id": np.repeat(site_cat.to_numpy(), len(limits.tables)),
                           "use": np.tile(limits.tables["use"].to_numpy(), len(site_cat))})
    else:
        su = site_uses(sites)
    ent = entries[["use", "analyte", "fraction"]].assign(_e=np.arange(len(entries)))
    pairs = su.drop_duplicates().merge(ent, on="use")
    pairs = pairs[scope.keep_pairs(pairs, entries, limits.tables, sites)]  # entries scoped by site attributes
    p_site = _codes(pairs["site_id"], pd.Index(site_cat))
    p_ana = _codes(pairs["analyte"], pd.Index(ana_cat))
    p_fr = _codes(pairs["fraction"], fr_index)
    keep = (p_site >= 0) & (p_ana >= 0) & (p_fr >= 0)
    p_key = ((p_site.astype(np.int64) * n_a + p_ana) * n_f + p_fr)[keep]
    p_entry = pairs["_e"].to_numpy()[keep]
    order = np.argsort(p_key, kind="stable")
    p_key, p_entry = p_key[order], p_entry[order]
    # keys are numbers below n_keys: each key's first pair and count by table look-up, not a search per result
    n_keys = len(site_cat) * n_a * n_f
    per_key = np.bincount(p_key, minlength=n_keys)
    first = np.cumsum(per_key) - per_key

    def expand(r_fr: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        r_key = (site_code.astype(np.int64) * n_a + ana_code) * n_f + r_fr
        inside = (site_code >= 0) & (ana_code >= 0) & (r_fr >= 0)  # (a missing code makes a key of no pair)
        at = np.where(inside, r_key, 0)
        start, counts = first[at], np.where(inside, per_key[at], 0) if n_keys else np.zeros(len(r_key), np.int64)
        ends = np.cumsum(counts)
        r_pos = np.repeat(np.arange(len(results)), counts)
        return r_pos, p_entry[np.repeat(start - ends + counts, counts) + np.arange(len(r_pos))]

    none = np.zeros(0, dtype=np.int64)
    r_pos, e_pos = expand(fr_code) if own else (none, none)
    r_x, e_x = none, none
    if cross_fraction:  # the other fraction's entries, for results whose sample lacks that fraction
        other = fr_index.get_indexer(fractions.other_fractions(fr_text))
        r_x, e_x = expand(np.where(fr_code >= 0, other[np.maximum(fr_code, 0)] if len(other) else -1, -1))
        keep_x = fractions.lacks_other_fraction(results)[r_x] & \
            (entries["basis"].astype(str).to_numpy(dtype=object)[e_x] == "single_sample")
        r_x, e_x = r_x[keep_x], e_x[keep_x]
    return r_pos, e_pos, r_x, e_x


def days(dates: pd.Series) -> np.ndarray:
    """Whole days since 1970 as int64 (NaT stays :data:`NAT_DAY`), for fast date comparisons."""
    ns = pd.to_datetime(dates).astype("datetime64[ns]").to_numpy().view(np.int64)
    return np.where(ns == NAT_DAY, NAT_DAY, np.floor_divide(ns, 86_400_000_000_000))


def in_force(results: pd.DataFrame, entries: pd.DataFrame, r_pos: np.ndarray, e_pos: np.ndarray) -> np.ndarray:
    """True where entry ``e_pos`` is in force on the sampling day of result ``r_pos`` (inclusive days;
    a missing ``effective_from`` / ``effective_to`` is open)."""
    lo_e, hi_e = days(entries["effective_from"]), days(entries["effective_to"])
    dated = ((lo_e != NAT_DAY) | (hi_e != NAT_DAY))[e_pos]  # an entry without dates is always in force
    out = np.ones(len(r_pos), dtype=bool)
    at = np.flatnonzero(dated)
    day, lo, hi = days(results["sampled_at"])[r_pos[at]], lo_e[e_pos[at]], hi_e[e_pos[at]]
    out[at] = ((lo == NAT_DAY) | (day >= lo)) & ((hi == NAT_DAY) | (day <= hi))
    return out
