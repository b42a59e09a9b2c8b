"""Mann-Kendall and seasonal Kendall tests, Sen and Akritas-Theil-Sen slopes, for many series at once.

Var(S) of all series comes at once from counts, without the pairs
(:func:`tracescreen.statistics.long_series.kendall_grouped`, O(n log n)). The slopes are order
statistics of the pairwise slopes, and S is a sum over the same pairs (:func:`_pair_s`): both are
computed on padded arrays of the pairs of each series
(:func:`tracescreen.statistics.series.chunks` packs series in buckets of similar length; a seasonal
series' row holds one block per season and only pairs within a block are formed, so 12 seasons cost
about 1/12 of the pairs); series longer than :data:`tracescreen.statistics.long_series.LONG_SERIES`
find them (and S) by counting instead.

* Kendall's S counts concordant minus discordant pairs in time order. A pair whose order is
  uncertain because of a non-detect (non-detect vs non-detect, or a non-detect vs a detect below
  its detection limit) scores 0, i.e. is a tie (Helsel 2012, ch. 12). Without non-detects this is
  the ordinary Mann-Kendall test (Kendall 1975; Gilbert 1987).
* Var(S) is the exact permutation variance of S under "no trend" (Daniels 1944): with ties in
  the values only it is Kendall's tie-corrected variance
  [n(n-1)(2n+5) - sum t(t-1)(2t+5)]/18; it also covers tied sampling times and the ties made by
  non-detects. z has the continuity correction; p is two-sided from the normal distribution.
* Seasonal Kendall (Hirsch, Slack & Smith 1982; Hirsch & Slack 1984): S and Var(S) are summed
  over seasons, pairs compared only within a season.
* The slope is the Sen (1968) median of pairwise slopes in units per year from the sampling
  dates, with Gilbert's (1987) confidence interval; with non-detects it is the Akritas-Theil-Sen
  slope (Akritas, Murphy & LaValley 1995), the slope that makes the censored S of the residuals
  zero, with the interval obtained the same way by inverting the censored test.

References
----------
[Mann1945]_, [Kendall1975]_, [Daniels1944]_, [Gilbert1987]_, [Sen1968]_, [HirschEtAl1982]_, [HirschSlack1984]_, [AkritasEtAl1995]_, [Helsel2012]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import special  # the normal distribution's functions (scipy.stats, a slow import, calls these)

from tracescreen.statistics import long_series
from tracescreen.statistics.censored import _km_rows
from tracescreen.statistics.series import chunks

#: Cells (series x values x values) per chunk of the pairwise kernel.
PAIR_BUDGET = 2_000_000

TREND_COLUMNS = ["n", "n_nondetect", "s", "var_s", "z", "p_value", "tau", "slope_per_year",
                 "slope_low", "slope_high", "slope_method", "intercept", "t0"]


def _row_median(x, valid):
    """Median of the valid cells of each row (NaN for an empty row)."""
    xs = np.sort(np.where(valid, x, np.inf), axis=1)
    n = valid.sum(axis=1)
    with np.errstate(invalid="ignore"):
        med = (_pick(xs, (n - 1) // 2) + _pick(xs, n // 2)) / 2.0
    return np.where(n > 0, med, np.nan)


def _pick(sorted_vals, k):
    """sorted_vals[g, k[g]] with k clipped to the row."""
    k = np.clip(k, 0, sorted_vals.shape[1] - 1)
    return np.take_along_axis(sorted_vals, k[:, None], axis=1)[:, 0]


def _slope_rows(t, y, nd, valid, pairs, c, force_ats=False):
    """Sen / Akritas-Theil-Sen slope, interval and intercept for each row of padded arrays.

    ``pairs`` (i, j) are the column pairs compared, i earlier than j (:meth:`.series.Chunk.pairs`: cells
    of one season; a row holds its seasons in blocks sorted by time). ``c`` is each row's
    z_crit * sqrt(Var(S)) (the interval's half-width in ranks of S). Each row's Kendall S is summed
    over the same pairs (:func:`_pair_s`); Var(S) comes from
    :func:`tracescreen.statistics.long_series.kendall_grouped`.
    """
    g = t.shape[0]
    det = valid & ~nd
    nd = valid & nd
    i, j = pairs

    def pairs_of(x, k):  # np.take along the rows: about twice as fast as x[:, k]
        return np.take(x, k, axis=1)
    # candidate slopes (values or DLs), later minus earlier, within a season, not both NDs (padding
    # is NaN, so padded pairs compare False and divide to NaN)
    censored = nd.any(axis=1) | force_ats
    nd_i, nd_j = (pairs_of(nd, i), pairs_of(nd, j)) if nd.any() else (None, None)
    with np.errstate(invalid="ignore", divide="ignore"):
        dt = pairs_of(t, j)
        dt -= pairs_of(t, i)
        usable = dt > 0
        slopes = pairs_of(y, j)
        slopes -= pairs_of(y, i)
        s = _pair_s(slopes, usable, nd_i, nd_j)
        slopes /= dt
    del dt
    if nd_i is not None:
        usable &= ~(nd_i & nd_j)
    slopes[~usable] = np.nan
    n_pairs = np.count_nonzero(usable, axis=1)
    # Sen slope: median of the pairwise slopes; CI by Gilbert (1987), ranks as scipy.theilslopes
    # each series' slope is selected once: the Sen ranks for series without non-detects, the
    # Akritas-Theil-Sen ranks for the others (the rows are taken apart; selection is the cost here)
    slope, low, high = (np.full(g, np.nan) for _ in range(3))
    sen_rows = np.flatnonzero(~censored)
    if sen_rows.size:
        k = n_pairs[sen_rows]
        ranks = np.stack([(k - 1) // 2, k // 2, np.round((k - c[sen_rows]) / 2.0) - 1,
                          np.round((k + c[sen_rows]) / 2.0)], axis=1)
        sen = _select(slopes[sen_rows] if sen_rows.size < g else slopes, ranks, k)
        slope[sen_rows], low[sen_rows], high[sen_rows] = (sen[:, 0] + sen[:, 1]) / 2.0, sen[:, 2], sen[:, 3]
    ats_rows = np.flatnonzero(censored)
    if ats_rows.size:
        every = ats_rows.size == g
        sl, u, d_ = (slopes, usable, det) if every else (slopes[ats_rows], usable[ats_rows], det[ats_rows])
        det_j = pairs_of(d_, j)
        both = pairs_of(d_, i) & det_j & u  # detect/detect pairs count twice in S(beta) (see _ats_ranks)
        n_dd = np.count_nonzero(both, axis=1)
        n_nd_d = np.count_nonzero(u & det_j, axis=1) - n_dd  # non-detect then detect
        ats = _select(np.concatenate([sl, np.where(both, sl, np.nan)], axis=1),
                      *_ats_ranks(n_dd, n_nd_d, n_pairs[ats_rows], c[ats_rows]))
        slope[ats_rows], low[ats_rows], high[ats_rows] = (ats[:, 0] + ats[:, 1]) / 2.0, ats[:, 2], ats[:, 3]
    none = n_pairs == 0
    slope[none] = low[none] = high[none] = np.nan
    # intercept: value of the line at the first sampling time t0 (median of residuals)
    t0 = np.where(valid, t, np.inf).min(axis=1)
    tv = np.where(valid, t - t0[:, None], np.nan)
    with np.errstate(invalid="ignore"):
        intercept = _row_median(y, valid) - slope * _row_median(tv, valid)
        if censored.any():
            resid = np.where(valid, y - slope[:, None] * np.nan_to_num(tv), np.inf)
            km = _km_rows(resid, nd, valid, (0.5,))["q"][:, 0]
            intercept = np.where(censored, km, intercept)
    return {"slope_per_year": slope, "slope_low": low, "slope_high": high,
            "slope_method": np.where(censored, "akritas_theil_sen", "sen"), "intercept": intercept, "t0": t0,
            "s": s}


def _pair_s(dy, later, nd_i, nd_j):
    """Kendall's S of each row from its pairs: pairs certainly increasing minus pairs certainly decreasing.

    ``dy`` (g, pairs) is the later value (or DL) minus the earlier; ``later`` marks the pairs whose
    times differ (pairs tied in time score 0); ``nd_i``, ``nd_j`` flag the earlier and later value as
    non-detects (None: no non-detects). A non-detect is an interval [0, DL): a pair increases for
    certain when the later value is detected and above the earlier one, or equal to the earlier
    one's DL; it decreases for certain when the earlier value is detected and above the later one,
    or equal to the later one's DL (Helsel 2012, sec. 12.2); every other pair scores 0. For finite
    doubles ``a - b`` is 0 exactly when ``a == b`` and takes the sign of ``a - b``, so the
    difference is compared, not the values. Padding is NaN and compares False.
    """
    up, down = dy > 0, dy < 0
    if nd_i is not None:
        tied = dy == 0
        up = (up | (nd_i & tied)) & ~nd_j
        down = (down | (nd_j & tied)) & ~nd_i
    up &= later
    down &= later
    return (np.count_nonzero(up, axis=1) - np.count_nonzero(down, axis=1)).astype(float)


#: Rows at least this wide are selected one at a time (numpy's partition at several ranks of a 2-D array
#: costs several times a one-rank partition; nested one-rank partitions of a row do not).
ROW_SELECT_WIDTH = 512


def _select(values, ranks, n):
    """The ``ranks``-th smallest (0-based, clipped to 0 .. n - 1) of each row's valid values.

    ``values`` (g, L) holds each row's values with NaN in the other cells (NaN sorts last); ``n`` (g,)
    counts the valid ones. Partial sorts (``numpy.partition``, introselect) at the ranks asked for, not a
    full sort of the row: the slopes' order statistics are all the Sen and Akritas-Theil-Sen estimates
    need. Wide rows are partitioned in place (``values`` is scratch). NaN where a row has no value.
    """
    ranks = np.clip(np.asarray(ranks, dtype=np.int64), 0, np.maximum(n - 1, 0)[:, None])
    if values.shape[1] == 0:
        return np.full(ranks.shape, np.nan)
    if values.shape[1] >= ROW_SELECT_WIDTH:
        out = np.stack([_select_row(values[r], ranks[r]) for r in range(values.shape[0])])
    else:
        kth = np.unique(ranks)
        part = np.partition(values, np.clip(kth, 0, values.shape[1] - 1), axis=1)
        out = np.take_along_axis(part, ranks, axis=1)
    return np.where((n > 0)[:, None], out, np.nan)


def _select_row(row, ranks):
    """``row``'s values at 0-based ``ranks`` by nested one-rank partitions of the segments between them."""
    want = [int(k) for k in np.unique(ranks)]
    found = {}
    todo = [(0, row.size, want)]
    while todo:
        lo, hi, ks = todo.pop()
        if not ks:
            continue
        mid = len(ks) // 2
        k = ks[mid]
        seg = row[lo:hi]
        seg.partition(k - lo)
        found[k] = seg[k - lo]
        todo += [(lo, k, ks[:mid]), (k + 1, hi, ks[mid + 1:])]
    return np.array([found[int(k)] for k in ranks])


def _ats_ranks(n_dd, n_nd_d, n_pairs, c):
    """Ranks of the Akritas-Theil-Sen slope and interval in the candidate slopes, detect/detect ones twice.

    S(beta) of the residuals e = y - beta t is a non-increasing step function of beta that changes
    only at the candidate pairwise slopes c_p (values or detection limits). For a pair (i earlier,
    j later): detect/detect scores sign(c_p - beta); non-detect then detect scores +1 while
    beta <= c_p; detect then non-detect scores -1 once beta >= c_p. So just right of a candidate
    value v, S = (DD + ND_D) - W(v), with W(v) the number of candidates <= v counting each
    detect/detect candidate twice. beta_low(C) = inf{beta: S(beta) <= C} is therefore the
    ceil(DD + ND_D - C)-th smallest of that multiset, and beta_high(C) = sup{beta: S(beta) >= -C}
    its (floor(DD + ND_D + C) + 1)-th smallest: order statistics, found by selection. The estimate
    is the midpoint of the zero set (beta_low(0) + beta_high(0)) / 2; with no non-detects it is the
    Theil-Sen median.

    Returns
    -------
    (ranks, n)
        0-based ranks (g, 4): beta_low(0), beta_high(0), beta_low(C), beta_high(C); and the size of
        each row's multiset.
    """
    total = (n_dd + n_nd_d).astype(float)
    size = n_pairs + n_dd
    ranks = np.stack([np.ceil(total) - 1, np.floor(total), np.ceil(total - c) - 1, np.floor(total + c)], axis=1)
    return ranks, size


def _long_trend_row(t, y, nd, season, c, force_ats=False) -> dict:
    """:func:`_slope_rows` for one long series (sorted by time) without its pairs (see :mod:`.long_series`)."""
    censored = bool(nd.any()) or force_ats
    counts = long_series.SlopeCounts(t, y, nd, season)
    n_pairs, n_dd, n_nd_d = counts.usable()
    if n_pairs == 0:
        slope = low = high = np.nan
    elif censored:
        ranks, size = _ats_ranks(np.array([n_dd]), np.array([n_nd_d]), np.array([n_pairs]), c)
        r = long_series.slope_order_statistics(counts, ranks[0], int(size[0]), True)
        slope, low, high = (r[0] + r[1]) / 2.0, r[2], r[3]
    else:
        ranks = [(n_pairs - 1) // 2, n_pairs // 2, np.round((n_pairs - c) / 2.0) - 1, np.round((n_pairs + c) / 2.0)]
        r = long_series.slope_order_statistics(counts, ranks, n_pairs, False)
        slope, low, high = (r[0] + r[1]) / 2.0, r[2], r[3]
    t0 = float(t.min())
    tv = t - t0
    if censored and np.isfinite(slope):
        resid = y - slope * tv
        intercept = _km_rows(resid[None, :], nd[None, :], np.ones((1, t.size), bool), (0.5,))["q"][0, 0]
    else:
        intercept = float(np.median(y) - slope * np.median(tv))
    return {"slope_per_year": slope, "slope_low": low, "slope_high": high,
            "slope_method": "akritas_theil_sen" if censored else "sen", "intercept": intercept, "t0": t0}


def mann_kendall_grouped(times, values, nondetect, codes, n_groups, seasons=None,
                         alpha=0.05, force_ats=False) -> pd.DataFrame:
    """Mann-Kendall / seasonal Kendall test and Sen / ATS slope for many series at once.

    Parameters
    ----------
    times : array_like of float
        Sampling times in decimal years (:func:`decimal_years`); slopes are per year.
    values : array_like of float
        Detected value, or the detection limit of a non-detect [µg/L].
    nondetect : array_like of bool, optional
        True for a non-detect; None for none.
    codes : array_like of int
        Series code of each value (0 .. n_groups - 1).
    seasons : array_like of int, optional
        Season of each value (0 .. P - 1) for the seasonal Kendall test; None for one season.
    alpha : float
        Two-sided significance level; the slope interval has confidence 1 - alpha.
    force_ats : bool
        Use the Akritas-Theil-Sen search also for series without non-detects (for checks: it
        then gives the Sen median).

    Returns
    -------
    DataFrame
        One row per code with :data:`TREND_COLUMNS`: ``s``, ``var_s``, ``z``, ``p_value``, ``tau``,
        ``slope_per_year`` [µg/L per year], ``slope_low``, ``slope_high``, ``slope_method``
        (``sen`` or ``akritas_theil_sen``), ``intercept`` (value of the line at ``t0``, the first
        sampling time, µg/L).
    """
    t = np.asarray(times, dtype=float)
    y = np.asarray(values, dtype=float)
    nd = np.zeros(y.shape, bool) if nondetect is None else np.asarray(nondetect, dtype=bool)
    season = np.zeros(y.shape, np.int64) if seasons is None else np.asarray(seasons, np.int64)
    codes = np.asarray(codes, dtype=np.int64)
    if np.isnan(y).any() or np.isnan(t).any():
        raise ValueError("times and values must not contain NaN")
    z_crit = special.ndtri(1 - alpha / 2)  # standard normal quantile
    cols = {c: np.full(n_groups, np.nan) for c in TREND_COLUMNS}
    cols["slope_method"] = np.full(n_groups, None, dtype=object)
    size = np.bincount(codes, minlength=n_groups).astype(float)
    long = size > long_series.LONG_SERIES
    # Var(S) of every series from counts (no pairs); S from counts for the long series only, the
    # others' S is summed over the pairs their slopes are formed from (_slope_rows)
    s, var_s, pairs = long_series.kendall_grouped(t, y, nd, season, codes, n_groups, s_of=long)
    s = np.where(long, s, np.where(size > 0, 0.0, np.nan))  # one value: no pair, S = 0
    cols.update(var_s=var_s, n=size, n_nondetect=np.bincount(codes, nd, minlength=n_groups).astype(float))
    c = np.nan_to_num(z_crit * np.sqrt(var_s), nan=0.0)
    slope_cols = TREND_COLUMNS[TREND_COLUMNS.index("slope_per_year"):]
    for g in np.flatnonzero(size > long_series.LONG_SERIES):  # a few long series, each without its pairs
        at = np.flatnonzero(codes == g)
        at = at[np.argsort(t[at], kind="stable")]
        row = _long_trend_row(t[at], y[at], nd[at], season[at], c[g], force_ats)
        for col in slope_cols:
            cols[col][g] = row[col]
    short = size[codes] <= long_series.LONG_SERIES
    if not short.all():
        t, y, nd, season, codes = t[short], y[short], nd[short], season[short], codes[short]
    # pairs only within a season: each series' seasons are blocks of its row (12 seasons: 1/12 of the pairs)
    for chunk in chunks(codes, n_groups, order=t, cells=lambda m: m * (m - 1) // 2,
                        budget=PAIR_BUDGET, blocks=season):
        r = _slope_rows(chunk.take(t, np.nan), chunk.take(y, np.nan), chunk.take(nd, False),
                        chunk.valid, chunk.pairs(), c[chunk.groups], force_ats)
        for col in slope_cols:
            cols[col][chunk.groups] = r[col]
        s[chunk.groups] = r["s"]
    # z with the continuity correction
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(s > 0, (s - 1) / np.sqrt(var_s), np.where(s < 0, (s + 1) / np.sqrt(var_s), 0.0))
        # every pair tied (all values equal, or every result <DL): S = 0 and Var(S) = 0; the
        # reference libraries report z = 0, p = 1 (no trend), not a blank
        cols["z"] = np.where(var_s > 0, z, np.where(pairs > 0, 0.0, np.nan))
        cols["tau"] = s / pairs
    cols.update(s=s, p_value=2.0 * special.ndtr(-np.abs(cols["z"])))
    return pd.DataFrame(cols)


def mann_kendall(times, values, nondetect=None, seasons=None, alpha=0.05) -> dict:
    """Mann-Kendall (or seasonal Kendall) test with Sen / ATS slope for one series.

    See :func:`mann_kendall_grouped` for parameters and the module docstring for the methods.
    Returns a dict with the :data:`TREND_COLUMNS`.
    """
    y = np.asarray(values, dtype=float)
    out = mann_kendall_grouped(times, y, nondetect, np.zeros(y.size, np.int64), 1, seasons, alpha)
    return out.iloc[0].to_dict()
