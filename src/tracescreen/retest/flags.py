"""Retest flags on screened results: which samples a reviewer should send back for confirmation.

Each function takes the screening table (one row per result and applicable limit, the contract in
DEVELOPERS.md) or the accepted results, and returns retest rows with the columns
:data:`RETEST_COLUMNS`: one row per flagged result, with a reason code, a detail a laboratory can
act on, and a suggested action. Only site samples (``sample_type == "sample"``) are flagged here;
blanks and field duplicates are QC samples, checked in :mod:`tracescreen.qc`.

All functions are vectorised (groupby, merges, shifts); the only loop is in
:func:`history_outlier`, over positions in a series, each step vectorised over all series.

Concentrations are in µg/L throughout.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.screening.uncertainty import uncertainty_decision
from tracescreen.vocabulary import REL_TOL

RETEST_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch",
    "reason", "detail", "suggested_action",
]
"""Columns of ``retest.csv``, in order."""

USED_COLUMNS = [
    "file", "sheet", "row", "site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch",
    "sample_type", "parent_sample_id", "detected", "value_ug_L", "detection_limit_ug_L", "uncertainty_ug_L",
    "analysed_at", "status", "limit_ug_L", "limit_table", "use", "duration", "basis", "qualifier_meaning",
]
"""Columns of the screening table that the flags and QC checks read."""

RESULT_KEY = ["file", "sheet", "row"]
"""Provenance columns that identify one accepted result (one input row)."""

SERIES_KEY = ["site_id", "analyte", "fraction"]
"""A monitoring series: one site, one analyte, one fraction."""

SUGGESTED_ACTIONS = {
    "first_exceedance": (
        "Confirm before reporting: resample and reanalyse; check chain of custody, units and the "
        "laboratory's QC for the batch."),
    "dl_too_high": (
        "Ask the laboratory to reanalyse (or use a method) with a detection limit at or below the "
        "one needed."),
    "near_limit": (
        "Confirm with a repeat sample; consider closer monitoring of this site and analyte."),
    "uncertainty_straddles_limit": (
        "The result cannot be told apart from the limit at its stated uncertainty: ask for replicate "
        "analysis or a method with lower uncertainty."),
    "history_outlier": (
        "Check for a transcription, unit or sample-identity error; ask the laboratory to verify and "
        "reanalyse if the sample is still held."),
    "duplicate_disagrees": (
        "Review field and laboratory precision; reanalyse both samples of the pair or resample."),
    "blank_contamination": (
        "The result may be biased high by contamination: ask the laboratory to investigate the batch "
        "and resample with fresh blanks."),
    "dissolved_exceeds_total": (
        "Check filtration, preservation and sample labels; ask the laboratory to reanalyse both "
        "fractions."),
    "above_range": (
        "Above the calibrated range: ask the laboratory to dilute and reanalyse the sample (the "
        "result is only a lower bound)."),
    "holding_time_exceeded": (
        "The result is outside its holding time: resample and analyse within the holding time."),
}
"""Suggested action for each reason code (common practice)."""

_RTOL = REL_TOL  # relative tolerance for threshold comparisons (floating-point error of conversions)


# ----------------------------------------------------------------------------- helpers
def format_number(values, digits: int = 4) -> pd.Series:
    """Format numbers with ``digits`` significant figures, vectorised; NaN becomes ``""``.

    Parameters
    ----------
    values : array-like of float
    digits : int
        Significant figures.

    Returns
    -------
    pandas.Series of str
    """
    index = values.index if isinstance(values, pd.Series) else None
    v = np.asarray(values, dtype=float)
    out = np.full(v.shape, np.nan)
    ok = np.isfinite(v) & (v != 0)
    mag = np.zeros(v.shape)
    mag[ok] = np.floor(np.log10(np.abs(v[ok])))
    k = mag - digits + 1  # round to a multiple of 10**k
    neg = ok & (k < 0)
    pos = ok & (k >= 0)
    out[neg] = np.round(v[neg] * 10.0 ** -k[neg]) / 10.0 ** -k[neg]
    out[pos] = np.round(v[pos] / 10.0 ** k[pos]) * 10.0 ** k[pos]
    out[v == 0] = 0.0
    text = pd.Series(out, index=index).astype(str).str.replace(r"\.0$", "", regex=True)
    return text.where(np.isfinite(out), "").astype(object)


def format_date(values) -> pd.Series:
    """ISO date (``YYYY-MM-DD``) of datetimes, vectorised; NaT becomes ``""``."""
    s = pd.to_datetime(values if isinstance(values, pd.Series) else pd.Series(values))
    return s.dt.strftime("%Y-%m-%d").fillna("").astype(object)


def site_samples(frame: pd.DataFrame) -> pd.DataFrame:
    """Rows of site samples (not blanks or field duplicates)."""
    if "sample_type" not in frame.columns:
        return frame
    mask = frame["sample_type"].eq("sample")
    return frame if mask.all() else frame[mask]


def single_sample_rows(screening: pd.DataFrame) -> pd.DataFrame:
    """Site-sample rows compared with single-sample limits (period bases such as running annual
    means and percentiles are judged on periods, not on one result)."""
    site = site_samples(screening)
    if "basis" not in site.columns:
        return site
    basis = site["basis"].fillna("").astype(str)
    mask = basis.isin(["single_sample", ""])
    return site if mask.all() else site[mask]


def results_from_screening(screening: pd.DataFrame) -> pd.DataFrame:
    """One row per accepted result from the screening table (drops the per-limit repetition)."""
    key = [c for c in RESULT_KEY if c in screening.columns]
    if not key:
        return screening.reset_index(drop=True)
    return screening.drop_duplicates(key).reset_index(drop=True)


def retest_rows(frame: pd.DataFrame, reason: str, detail) -> pd.DataFrame:
    """Build retest rows (:data:`RETEST_COLUMNS`) from result rows, a reason and details."""
    out = pd.DataFrame(index=frame.index)
    for col in ("site_id", "sample_id", "sampled_at", "analyte", "fraction"):
        out[col] = frame[col]
    for col in ("lab", "batch"):
        out[col] = frame[col].fillna("") if col in frame.columns else ""
    out["reason"] = reason
    out["detail"] = detail
    out["suggested_action"] = SUGGESTED_ACTIONS[reason]
    out = out.sort_values(["site_id", "sampled_at", "sample_id", "analyte", "fraction"], kind="stable")
    return out[RETEST_COLUMNS].reset_index(drop=True)


def empty_retest() -> pd.DataFrame:
    """An empty retest table with the right columns."""
    return pd.DataFrame({c: pd.Series(dtype="datetime64[us]" if c == "sampled_at" else object)
                         for c in RETEST_COLUMNS})


def _limit_label(frame: pd.DataFrame) -> pd.Series:
    """``table, use`` label of the limit on each screening row."""
    table = frame["limit_table"].fillna("").astype(str)
    label = table
    if "duration" in frame.columns:
        dur = frame["duration"].fillna("").astype(str)
        label = label + np.where(dur.ne(""), " " + dur, "")
    if "use" in frame.columns:
        label = label + ", " + frame["use"].fillna("").astype(str)
    return label


def _ug(values) -> pd.Series:
    return format_number(values) + " µg/L"


# ----------------------------------------------------------------------------- flags
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
    dates = site[SERIES_KEY + ["sampled_at"]].drop_duplicates().sort_values(SERIES_KEY + ["sampled_at"])
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
    flagged = worst.merge(events, on=SERIES_KEY + ["sampled_at"])
    n_before = flagged["_rank"].astype(int)
    history = pd.Series(np.where(
        n_before.eq(0), "no earlier results",
        np.where(flagged["_prev_at"].isna(),
                 "no exceedance in the " + n_before.astype(str) + " earlier sampling dates",
                 "last exceedance on " + format_date(flagged["_prev_at"]) + ", beyond the look-back ("
                 + window + ")")), index=flagged.index)
    detail = ("first exceedance of this site and analyte: " + _ug(flagged["value_ug_L"])
              + " > limit " + _ug(flagged["limit_ug_L"]) + " (" + _limit_label(flagged) + "); " + history
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
    from tracescreen.io.qualifiers import has_meaning

    meaning = frame["qualifier_meaning"].fillna("").astype(str).to_numpy(dtype=object)
    out = np.full(len(frame), "", dtype=object)
    for key, text in _BIAS_NOTES:
        out = np.where(has_meaning(meaning, {key}), out + text, out)
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
    from tracescreen.io.qualifiers import has_meaning

    hit = site[has_meaning(site["qualifier_meaning"].fillna("").astype(str).to_numpy(dtype=object), {"above_range"})]
    if hit.empty:
        return empty_retest()
    hit = hit.drop_duplicates([c for c in RESULT_KEY if c in hit.columns] or None)
    detail = ("reported above the calibrated range: at least " + _ug(hit["value_ug_L"])
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
    inc = inc.assign(_n=n_limits).drop_duplicates(key)
    others = np.where(inc["_n"] > 1, " (and " + (inc["_n"] - 1).astype(str) + " other limit(s))", "")
    detail = ("non-detect at detection limit " + _ug(inc["detection_limit_ug_L"])
              + " decides nothing against limit " + _ug(inc["limit_ug_L"]) + " ("
              + _limit_label(inc) + ")" + others + "; detection limit needed: <= "
              + _ug(inc["limit_ug_L"]))
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
    exceeded = site.loc[site["status"].eq("exceeds"), key] if key else None
    near = site[site["status"].eq("meets")
                & (site["value_ug_L"] >= fraction * site["limit_ug_L"] * (1 - _RTOL))]
    if key and not near.empty:
        near = near.merge(exceeded.drop_duplicates(), on=key, how="left", indicator=True)
        near = near[near["_merge"].eq("left_only")].drop(columns="_merge")
    if near.empty:
        return empty_retest()
    near = near.assign(_r=near["value_ug_L"] / near["limit_ug_L"])
    near = near.sort_values("_r", ascending=False, kind="stable").drop_duplicates(key)
    detail = (_ug(near["value_ug_L"]) + " is " + format_number(100 * near["_r"], 3)
              + " % of limit " + _ug(near["limit_ug_L"]) + " (" + _limit_label(near)
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
    .. [1] Bettencourt da Silva, R. and Williams, A. (eds.) (2021). Eurachem/CITAC Guide: Use of
       uncertainty information in compliance assessment, 2nd ed. Eurachem.
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
    hit = hit.sort_values("_g", kind="stable").drop_duplicates(key)
    side = np.where(hit["uncertainty_decision"].eq("exceeds_within_uncertainty"),
                    "reported above", "reported at or below")
    detail = (_ug(hit["value_ug_L"]) + " ± " + _ug(hit["uncertainty_ug_L"])
              + " (expanded uncertainty) spans limit " + _ug(hit["limit_ug_L"]) + " ("
              + _limit_label(hit) + "); " + side + " the limit, but not beyond the uncertainty")
    return retest_rows(hit, "uncertainty_straddles_limit", detail)


def modified_z_score(x: np.ndarray, history: np.ndarray) -> np.ndarray:
    """Modified z-score of each ``x[i]`` against the row ``history[i, :]``.

    ``M = 0.6745 (x − median) / MAD`` with MAD the median absolute deviation from the median.
    When the MAD is zero (more than half the history identical), the mean absolute deviation
    scaled by 1.253314 is used instead (``M = (x − median) / (1.253314 MeanAD)``, common practice);
    when that is zero too the score is NaN (no spread to compare with).

    Parameters
    ----------
    x : numpy.ndarray, shape (k,)
    history : numpy.ndarray, shape (k, n)

    Returns
    -------
    numpy.ndarray, shape (k,)

    References
    ----------
    .. [1] Iglewicz, B. and Hoaglin, D. C. (1993). How to Detect and Handle Outliers. ASQC Basic
       References in Quality Control, vol. 16. Milwaukee: ASQC Quality Press. (|M| > 3.5 labelled
       as potential outliers.)
    """
    med = np.median(history, axis=1)
    dev = np.abs(history - med[:, None])
    mad = np.median(dev, axis=1)
    mean_ad = dev.mean(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.where(mad > 0, 0.6745 * (x - med) / mad, (x - med) / (1.253314 * mean_ad))
    return np.where((mad > 0) | (mean_ad > 0), z, np.nan)


def _kth_of_two_sorted(a_at, n_a, b_at, n_b, k):
    """k-th smallest (0-based) of the union of two ascending sequences per row (vectorised).

    ``a_at(t)`` / ``b_at(t)`` give the t-th element of each row's sequences (t an int array),
    ``n_a``, ``n_b`` their lengths. Binary search on how many elements come from ``a``.
    """
    lo = np.maximum(0, k + 1 - n_b)
    hi = np.minimum(k + 1, n_a)
    while (lo < hi).any():
        mid = (lo + hi) // 2
        # while lo < hi, mid < n_a and 0 <= k - mid < n_b; elsewhere the indices are only clipped
        take_more = (lo < hi) & (a_at(np.minimum(mid, np.maximum(n_a - 1, 0))) < b_at(np.clip(k - mid, 0, None)))
        lo = np.where(take_more, mid + 1, lo)
        hi = np.where((lo < hi) & ~take_more, mid, hi)
    na = lo
    nb = k + 1 - na
    from_a = np.where(na > 0, a_at(np.maximum(na - 1, 0)), -np.inf)
    from_b = np.where(nb > 0, b_at(np.maximum(nb - 1, 0)), -np.inf)
    return np.maximum(from_a, from_b)


def expanding_modified_z(x: np.ndarray, pos: np.ndarray, min_prior: int) -> tuple[np.ndarray, np.ndarray]:
    """:func:`modified_z_score` of each value against all earlier values of its series, and their median.

    ``x`` holds series one after another in time order; ``pos[r]`` is row r's place in its series
    (0 for the first). Rows with fewer than ``min_prior`` earlier values get NaN.

    Each series' history is kept sorted as it grows (one insertion per step, vectorised over
    series), so the median is read off the middle and the median absolute deviation is the
    middle of two sorted runs of deviations (left and right of the median), found by binary
    search: the same numbers as sorting every history, without the sorts.
    """
    n = len(x)
    z = np.full(n, np.nan)
    med_out = np.full(n, np.nan)
    if n == 0:
        return z, med_out
    firsts = np.flatnonzero(pos == 0)
    length = np.diff(np.append(firsts, n))
    by_length = np.argsort(-length, kind="stable")  # longest first: the live series are a prefix
    firsts, length = firsts[by_length], length[by_length]
    hist = np.full((len(firsts), int(length.max())), np.inf)  # each series' sorted history, +inf after
    for i in range(hist.shape[1]):  # step i: the value at place i of every series long enough
        k = int(np.count_nonzero(length > i))
        rows = firsts[:k] + i
        h = hist[:k, :i]  # a view
        xr = x[rows]
        if i >= min_prior:
            med = (h[:, (i - 1) // 2] + h[:, i // 2]) / 2.0
            n_left = np.count_nonzero(h < med[:, None], axis=1)  # below the median: deviations med - h
            n_right = i - n_left
            rix = np.arange(k)

            def left(t):  # t-th smallest deviation left of the median (values read downwards)
                return med - h[rix, np.clip(n_left - 1 - t, 0, i - 1)]

            def right(t):
                return h[rix, np.clip(n_left + t, 0, i - 1)] - med

            mad = (_kth_of_two_sorted(left, n_left, right, n_right, np.full(k, (i - 1) // 2))
                   + _kth_of_two_sorted(left, n_left, right, n_right, np.full(k, i // 2))) / 2.0
            with np.errstate(divide="ignore", invalid="ignore"):
                zr = 0.6745 * (xr - med) / mad
            flat = ~(mad > 0)
            if flat.any():  # MAD zero: the scaled mean absolute deviation (see modified_z_score)
                zr[flat] = modified_z_score(xr[flat], h[flat])
            z[rows], med_out[rows] = zr, med
        # insert this step's value into its series' sorted history
        p = np.count_nonzero(h < xr[:, None], axis=1)
        col = np.arange(i + 1)
        grown = np.take_along_axis(hist[:k, :i + 1], np.where(col <= p[:, None], col, col - 1), axis=1)
        grown[np.arange(k), p] = xr
        hist[:k, :i + 1] = grown
    return z, med_out


def history_outlier(results: pd.DataFrame, z_threshold: float = 3.5,
                    min_prior: int = 8) -> pd.DataFrame:
    """Detected results far outside their own series' earlier detected values.

    For each detected site-sample result, the modified z-score of its natural log against the logs
    of all earlier detects of the same site, analyte and fraction (sorted by ``sampled_at``, then
    ``sample_id``); flagged when ``|M| > z_threshold`` and there are at least ``min_prior`` earlier
    detects. Non-detects take no part (neither flagged nor in the history).

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results (or the screening table; repeated limit rows are dropped).
    z_threshold : float
        Default 3.5 (Iglewicz & Hoaglin 1993).
    min_prior : int
        Minimum number of earlier detects, default 8.

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``history_outlier``.

    References
    ----------
    .. [1] Iglewicz, B. and Hoaglin, D. C. (1993). How to Detect and Handle Outliers. ASQC Quality
       Press.
    """
    res = site_samples(results_from_screening(results))
    det = res[res["detected"].astype(bool) & (res["value_ug_L"] > 0)]
    det = det.sort_values(SERIES_KEY + ["sampled_at", "sample_id"], kind="stable").reset_index(drop=True)
    if len(det) <= min_prior:
        return empty_retest()
    x = np.log(det["value_ug_L"].to_numpy(dtype=float))
    pos = det.groupby(SERIES_KEY, sort=False).cumcount().to_numpy()
    z, med = expanding_modified_z(x, pos, max(min_prior, 1))
    flag = np.abs(z) > z_threshold
    out = det[flag].assign(_z=z[flag], _med=np.exp(med[flag]), _n=pos[flag])
    if out.empty:
        return empty_retest()
    direction = np.where(out["_z"] > 0, "above", "below")
    detail = (_ug(out["value_ug_L"]) + " is far " + direction + " this series' history: modified "
              "z-score of ln(value) " + format_number(out["_z"], 3) + " (threshold "
              + format_number([z_threshold])[0] + ") against " + out["_n"].astype(str)
              + " earlier detects with median " + _ug(out["_med"]))
    return retest_rows(out, "history_outlier", detail)
