"""Retest flags on one screened result: which site samples a reviewer should send back for confirmation.

Each function takes the screening table (one row per result and applicable limit, the contract in
DEVELOPERS.md) and returns retest rows (:data:`tracescreen.retest.rows.RETEST_COLUMNS`). Only site
samples compared with single-sample limits are flagged here; a result against its own history is
:mod:`tracescreen.retest.outliers`, and blanks, field duplicates, fractions and holding times are
:mod:`tracescreen.retest.qc_checks`. Concentrations are in µg/L.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_date, format_number
from tracescreen.retest.rows import (
    RESULT_KEY,
    RTOL,
    SERIES_KEY,
    empty_retest,
    first_of_each,
    flagged_text,
    limit_label,
    meaning_mask,
    result_ids,
    retest_rows,
    single_sample_rows,
    ug,
)
from tracescreen.screening.uncertainty import uncertainty_decision
from tracescreen.statistics.series import site_samples


def first_exceedance(screening: pd.DataFrame, lookback=None) -> pd.DataFrame:
    """Exceedances in a series (site, analyte, fraction) with no exceedance in the look-back.

    An ``exceeds`` result (of any applicable limit) is flagged when none of the earlier sampling
    dates of the same site, analyte and fraction within the look-back had an exceedance.

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (DataFrame contract in DEVELOPERS.md).
    lookback : None, int, str or pandas.Timedelta
        ``None`` (default): the whole earlier history. An int ``n``: the ``n`` earlier sampling
        dates of the series. A duration (``"730D"``, ``pd.Timedelta(days=730)``): earlier results
        sampled within that time before this one (an exceedance exactly at the edge counts).

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``first_exceedance``.
    """
    site = single_sample_rows(screening)
    exc = site[site["status"].eq("exceeds").to_numpy()]
    if exc.empty:
        return empty_retest()
    # the worst limit per result for the detail (ratio descending, ties in table order, NaN last)
    order = np.argsort(-(exc["value_ug_L"] / exc["limit_ug_L"]).to_numpy(dtype=float), kind="stable")
    ids = result_ids(exc)
    if ids is None:
        key = [c for c in RESULT_KEY if c in exc.columns]
        firsts = ~exc.iloc[order].duplicated(key or None).to_numpy()
    else:
        firsts = ~pd.Series(ids[order]).duplicated().to_numpy()
    worst = exc.iloc[order[firsts]].reset_index(drop=True)

    # each series' sampling dates ranked (one row per result: a result's rows share series and date), the
    # dates with an exceedance, and for each the one before it in the same series
    at, day = _date_codes(site["sampled_at"], exc["sampled_at"], worst["sampled_at"])
    series = _series_codes([site, exc, worst])
    ids = result_ids(site)
    one = slice(None) if ids is None else first_of_each(ids)
    n_dates = len(day)
    dates = _distinct(series[0][one] * n_dates + at[0][one])  # (series, date)
    dates_series = dates // n_dates
    events = _distinct(series[1] * n_dates + at[1])
    mine = series[2] * n_dates + at[2]
    j = np.searchsorted(events, mine)
    has_prev = (j > 0) & (events[np.maximum(j - 1, 0)] // n_dates == series[2])
    prev = np.where(has_prev, events[np.maximum(j - 1, 0)], 0)

    def rank(key):  # earlier sampling dates of the series
        k = np.searchsorted(dates, key)
        return k - np.searchsorted(dates_series, key // n_dates)

    def prev_at(rows) -> pd.Series:  # the sampling date of the exceedance before, NaT for none
        return pd.Series(np.where(has_prev[rows], day[prev[rows] % n_dates], np.datetime64("NaT")),
                         dtype=site["sampled_at"].dtype)

    if lookback is None:
        first = ~has_prev
        window = "all earlier results"
    elif isinstance(lookback, (int, np.integer)) and not isinstance(lookback, bool):
        if lookback < 0:
            raise ValueError(f"lookback must be >= 0 sampling dates, got {lookback}")
        first = ~has_prev | ((rank(mine) - rank(prev)) > lookback)
        window = f"{int(lookback)} sampling dates"
    else:
        span = pd.Timedelta(lookback)
        first = ~has_prev | ((worst["sampled_at"] - prev_at(slice(None))) > span).to_numpy()
        window = f"{span.days} days"
    # ranks and dates of the flagged results only
    worst = worst[first].reset_index(drop=True).assign(_rank=rank(mine[first]), _prev_at=prev_at(first))
    flagged = flagged_text(worst)
    n_before = flagged["_rank"].astype(int)
    history = pd.Series(np.where(
        n_before.eq(0), "no earlier results",
        np.where(flagged["_prev_at"].isna(),
                 "no exceedance in the " + n_before.astype(str) + " earlier sampling dates",
                 "last exceedance on " + format_date(flagged["_prev_at"]) + ", beyond the look-back ("
                 + window + ")")), index=flagged.index)
    detail = ("first exceedance of this site and analyte: " + ug(flagged["value_ug_L"])
              + " > limit " + ug(flagged["limit_ug_L"]) + " (" + limit_label(flagged) + "); " + history
              + bias_note(flagged))
    return retest_rows(flagged, "first_exceedance", detail)


def _date_codes(*dates: pd.Series) -> tuple[list[np.ndarray], np.ndarray]:
    """Each date's place among the distinct dates of all of ``dates`` (one array per Series), and those
    dates sorted (NaT last): the dates hashed as integers, only the distinct ones sorted."""
    values = [d.to_numpy() for d in dates]
    nat = np.iinfo(np.int64).max
    ticks = np.concatenate([np.where(np.isnat(v), nat, v.view(np.int64)) for v in values])
    codes, distinct = pd.factorize(ticks)
    order = np.argsort(distinct, kind="stable")
    place = np.empty(len(order), dtype=np.int64)
    place[order] = np.arange(len(order))
    codes = place[codes]
    bounds = np.cumsum([0] + [len(v) for v in values])
    day = np.where(distinct[order] == nat, np.iinfo(np.int64).min, distinct[order]).view(values[0].dtype)
    return [codes[bounds[i]:bounds[i + 1]] for i in range(len(values))], day


def _distinct(values: np.ndarray) -> np.ndarray:
    """The distinct values, sorted (a sort and a comparison of neighbours)."""
    v = np.sort(values)
    return v[np.r_[True, v[1:] != v[:-1]]] if len(v) else v


def _series_codes(frames: list[pd.DataFrame]) -> list[np.ndarray]:
    """One integer per series (:data:`SERIES_KEY`), the same across ``frames`` (rows of one table)."""
    codes = pd.concat([f[SERIES_KEY] for f in frames], ignore_index=True)
    key = np.zeros(len(codes), dtype=np.int64)
    for c in SERIES_KEY:
        col = codes[c]
        k, uniques = (col.cat.codes.to_numpy().astype(np.int64), col.cat.categories) \
            if isinstance(col.dtype, pd.CategoricalDtype) else pd.factorize(col, use_na_sentinel=False)
        key = key * (len(uniques) + 1) + k + 1
    bounds = np.cumsum([0] + [len(f) for f in frames])
    return [key[bounds[i]:bounds[i + 1]] for i in range(len(frames))]


#: What a qualifier's bias says of an exceedance (NFG 2020: J+ estimated, biased high; J-
#: estimated, biased low): a value biased high may really be lower (weak), one biased low is at
#: least as high (firm); a lower bound (above the calibrated range) is certain.
_BIAS_NOTES = (("estimated_high", "; exceeds, biased high (qualifier J+: weak, the true value may be lower)"),
               ("estimated_low", "; exceeds, biased low (qualifier J-: firm, the true value may be higher)"),
               ("above_range", "; reported above the calibrated range: the true value is at least this"))


def bias_note(frame: pd.DataFrame) -> pd.Series:
    """Text to add to an exceedance's detail for the bias its qualifiers state ("" if none)."""
    if "qualifier_meaning" not in frame.columns:
        return pd.Series("", index=frame.index)
    out = np.full(len(frame), "", dtype=object)
    for key, text in _BIAS_NOTES:
        out = np.where(meaning_mask(frame["qualifier_meaning"], {key}), out + text, out)
    return pd.Series(out, index=frame.index, dtype=object)


def above_range(screening: pd.DataFrame) -> pd.DataFrame:
    """Site-sample results reported above the calibrated range (``>x``, remark ``>``, WQX
    'Above Operating Range'): the value is only a lower bound, so the sample should be diluted
    and reanalysed (common practice).

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``above_range``; one per result.
    """
    site = site_samples(screening)
    if "qualifier_meaning" not in site.columns or site.empty:
        return empty_retest()
    hit = site[meaning_mask(site["qualifier_meaning"], {"above_range"})]
    if hit.empty:
        return empty_retest()
    hit = flagged_text(hit.drop_duplicates([c for c in RESULT_KEY if c in hit.columns] or None))
    detail = ("reported above the calibrated range: at least " + ug(hit["value_ug_L"])
              + "; status " + hit["status"].astype(str))
    return retest_rows(hit, "above_range", detail)


def dl_too_high(screening: pd.DataFrame) -> pd.DataFrame:
    """Non-detects whose detection limit is above a limit (``nondetect_inconclusive``).

    The detail gives the detection limit needed: the lowest limit the result could not decide.

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table.

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``dl_too_high``.
    """
    site = single_sample_rows(screening)
    inc = site[site["status"].eq("nondetect_inconclusive")]
    if inc.empty:
        return empty_retest()
    key = [c for c in RESULT_KEY if c in inc.columns] or None
    inc = inc.sort_values("limit_ug_L", kind="stable")
    n_limits = inc.groupby(key or inc.index, sort=False)["limit_ug_L"].transform("size")
    inc = flagged_text(inc.assign(_n=n_limits).drop_duplicates(key))
    others = np.where(inc["_n"] > 1, " (and " + (inc["_n"] - 1).astype(str) + " other limit(s))", "")
    detail = ("non-detect at detection limit " + ug(inc["detection_limit_ug_L"])
              + " decides nothing against limit " + ug(inc["limit_ug_L"]) + " ("
              + limit_label(inc) + ")" + others + "; detection limit needed: <= "
              + ug(inc["limit_ug_L"]))
    return retest_rows(inc, "dl_too_high", detail)


def near_limit(screening: pd.DataFrame, fraction: float = 0.8) -> pd.DataFrame:
    """Detected results at or above ``fraction`` of a limit that they still meet.

    Results that exceed any limit are not flagged here (they are exceedances). A value exactly at
    ``fraction × limit`` is flagged (relative tolerance 1e-9 for conversion round-off).

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table.
    fraction : float
        Share of the limit, default 0.8 (80 %, common practice).

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``near_limit``.
    """
    if not 0 < fraction <= 1:
        raise ValueError(f"near-limit fraction must be in (0, 1], got {fraction}")
    site = single_sample_rows(screening)
    key = [c for c in RESULT_KEY if c in site.columns] or None
    status = site["status"]
    near = (status.eq("meets") & (site["value_ug_L"] >= fraction * site["limit_ug_L"] * (1 - RTOL))).to_numpy(copy=True)
    ids = result_ids(site) if key and near.any() else None
    # what the rows and details read (without a result key, rows are told apart by all their columns)
    used = [c for c in site.columns if c in _NEAR_COLUMNS or key is None]
    if ids is not None:  # not a result that exceeds another limit
        near &= ~np.isin(ids, ids[status.eq("exceeds").to_numpy()])
        ids = ids[near]
        near = site.loc[near, used].reset_index(drop=True)
    elif key and near.any():
        exceeded = site.loc[status.eq("exceeds"), key]
        near = site.loc[near, used].merge(exceeded.drop_duplicates(), on=key, how="left", indicator=True)
        near = near[near["_merge"].eq("left_only")].drop(columns="_merge")
    else:
        near = site.loc[near, used]
    if near.empty:
        return empty_retest()
    # the nearest limit per result: ratio descending, ties in table order, NaN last (a stable sort)
    ratio = (near["value_ug_L"] / near["limit_ug_L"]).to_numpy(dtype=float)
    order = np.argsort(-ratio, kind="stable")
    firsts = ~(pd.Series(ids[order]).duplicated() if ids is not None else near.iloc[order].duplicated(key)).to_numpy()
    near = flagged_text(near.iloc[order[firsts]].assign(_r=ratio[order[firsts]]))
    detail = (ug(near["value_ug_L"]) + " is " + format_number(100 * near["_r"], 3)
              + " % of limit " + ug(near["limit_ug_L"]) + " (" + limit_label(near)
              + "); flagged at >= " + format_number([100 * fraction])[0] + " %")
    return retest_rows(near, "near_limit", detail)


#: Columns of the screening table that :func:`near_limit` reads (its rows and details).
_NEAR_COLUMNS = frozenset(["site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch", "file", "sheet",
                           "row", "value_ug_L", "limit_ug_L", "limit_table", "duration", "use"])


def uncertainty_straddles_limit(screening: pd.DataFrame) -> pd.DataFrame:
    """Detected results that are within their expanded uncertainty of a single-sample limit.

    Flagged when ``L − U < x <= L + U`` (``x`` the result, ``U`` = ``uncertainty_ug_L`` the reported
    expanded uncertainty, ``L`` the limit): the decisions ``exceeds_within_uncertainty`` and
    ``meets_within_uncertainty`` of :func:`tracescreen.screening.uncertainty.uncertainty_decision` with a guard
    band of 1 × U, where the result cannot be said to be above or below the limit beyond its
    uncertainty. (``x + U = L`` meets beyond the uncertainty; ``x − U = L`` exceeds within it.)

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table with ``uncertainty_ug_L`` [µg/L].

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``uncertainty_straddles_limit``.

    References
    ----------
    [Eurachem2021]_ (docs/references.md)
    """
    if "uncertainty_ug_L" not in screening.columns:
        return empty_retest()
    site = single_sample_rows(screening)
    site = site[site["uncertainty_ug_L"].notna() & site["limit_ug_L"].notna()]
    if "basis" not in site.columns:
        site = site.assign(basis="single_sample")
    decided = uncertainty_decision(site, guard_band_factor=1.0)
    hit = decided[decided["uncertainty_decision"].isin(["exceeds_within_uncertainty", "meets_within_uncertainty"])]
    if hit.empty:
        return empty_retest()
    key = [c for c in RESULT_KEY if c in hit.columns] or None
    hit = hit.assign(_g=(hit["value_ug_L"] - hit["limit_ug_L"]).abs() / hit["uncertainty_ug_L"])
    hit = flagged_text(hit.sort_values("_g", kind="stable").drop_duplicates(key))
    side = np.where(hit["uncertainty_decision"].eq("exceeds_within_uncertainty"),
                    "reported above", "reported at or below")
    detail = (ug(hit["value_ug_L"]) + " ± " + ug(hit["uncertainty_ug_L"])
              + " (expanded uncertainty) spans limit " + ug(hit["limit_ug_L"]) + " ("
              + limit_label(hit) + "); " + side + " the limit, but not beyond the uncertainty")
    return retest_rows(hit, "uncertainty_straddles_limit", detail)
