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
    exc = site[site["status"].eq("exceeds")]
    if exc.empty:
        return empty_retest()
    # the worst limit per result for the detail
    exc = exc.assign(_r=exc["value_ug_L"] / exc["limit_ug_L"])
    worst = exc.sort_values("_r", ascending=False, kind="stable").drop_duplicates(
        [c for c in RESULT_KEY if c in exc.columns] or None)

    # sampling dates of each series, ranked; exceedance dates and the previous one
    dates = site[SERIES_KEY + ["sampled_at"]]
    ids = result_ids(site)
    if ids is not None:  # one row per result first (a result's rows share its series and date): fewer rows to compare
        dates = dates[~pd.Series(ids).duplicated().to_numpy()]
    dates = dates.drop_duplicates().sort_values(SERIES_KEY + ["sampled_at"])
    dates["_rank"] = dates.groupby(SERIES_KEY, sort=False).cumcount()
    events = exc[SERIES_KEY + ["sampled_at"]].drop_duplicates().merge(dates, on=SERIES_KEY + ["sampled_at"])
    events = events.sort_values(SERIES_KEY + ["sampled_at"])
    g = events.groupby(SERIES_KEY, sort=False)
    events["_prev_at"] = g["sampled_at"].shift(1)
    events["_prev_rank"] = g["_rank"].shift(1)
    none_before = events["_prev_at"].isna()
    if lookback is None:
        first = none_before
        window = "all earlier results"
    elif isinstance(lookback, (int, np.integer)) and not isinstance(lookback, bool):
        if lookback < 0:
            raise ValueError(f"lookback must be >= 0 sampling dates, got {lookback}")
        first = none_before | ((events["_rank"] - events["_prev_rank"]) > lookback)
        window = f"{int(lookback)} sampling dates"
    else:
        span = pd.Timedelta(lookback)
        first = none_before | ((events["sampled_at"] - events["_prev_at"]) > span)
        window = f"{span.days} days"
    events = events[first]
    flagged = flagged_text(worst.merge(events, on=SERIES_KEY + ["sampled_at"]))
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
    if ids is not None:  # not a result that exceeds another limit
        near &= ~np.isin(ids, ids[status.eq("exceeds").to_numpy()])
        near = site[near].reset_index(drop=True)
    elif key and near.any():
        exceeded = site.loc[status.eq("exceeds"), key]
        near = site[near].merge(exceeded.drop_duplicates(), on=key, how="left", indicator=True)
        near = near[near["_merge"].eq("left_only")].drop(columns="_merge")
    else:
        near = site[near]
    if near.empty:
        return empty_retest()
    near = near.assign(_r=near["value_ug_L"] / near["limit_ug_L"])
    near = flagged_text(near.sort_values("_r", ascending=False, kind="stable").drop_duplicates(key))
    detail = (ug(near["value_ug_L"]) + " is " + format_number(100 * near["_r"], 3)
              + " % of limit " + ug(near["limit_ug_L"]) + " (" + limit_label(near)
              + "); flagged at >= " + format_number([100 * fraction])[0] + " %")
    return retest_rows(near, "near_limit", detail)


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
