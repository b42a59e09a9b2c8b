"""Mann-Kendall and seasonal Kendall tests, Sen and Akritas-Theil-Sen slopes, for many series at once.

All series are computed at once on padded (series x values x values) arrays; there is no Python
loop over series (:func:`tracescreen.statistics.series.chunks` packs them in buckets of similar length).

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
from scipy import stats

from tracescreen.statistics import long_series
from tracescreen.statistics.censored import _km_rows
from tracescreen.statistics.series import chunks

#: Cells (series x values x values) per chunk of the pairwise kernel.
PAIR_BUDGET = 2_000_000

TREND_COLUMNS = ["n", "n_nondetect", "s", "var_s", "z", "p_value", "tau", "slope_per_year",
                 "slope_low", "slope_high", "slope_method", "intercept", "t0"]


def _pair_scores(dy, det_i, det_j, nd_i, nd_j):
    """Censored score of each pair (i earlier, j later) from dy = y_j - y_i (values or DLs).

    +1 where j is certainly above i, -1 certainly below, 0 where the order is unknown
    (Helsel 2012, sec. 12.2): a detect is above a non-detect when it is >= that non-detect's DL;
    two non-detects, or a non-detect and a detect below its DL, are a tie.
    """
    gt = det_j & ((dy > 0) | (nd_i & (dy >= 0)))
    lt = det_i & ((dy < 0) | (nd_j & (dy <= 0)))
    return gt.astype(np.int8) - lt.astype(np.int8)


def _daniels_variance(a, b, i, j, valid, season, n_seasons, time_ties=True):
    """Exact permutation variance of S = sum over pairs a_p b_p, per season, summed (Daniels 1944).

    With full antisymmetric matrices A, B over the values of one season (n of them):
    Var = [2/(n(n-1)) sum A^2 sum B^2 + 4/(n(n-1)(n-2)) (sum_i A_i.^2 - sum A^2)
    (sum_i B_i.^2 - sum B^2)] / 4. Pair p joins value ``i[p]`` (earlier) and ``j[p]`` (later);
    the row sums are accumulated by value with ``bincount`` (memory of the order of the pairs,
    not pairs x values). Without ties in time (``time_ties`` False) the time scores' sums are
    counted directly from each value's place in its season.
    """
    g, m = valid.shape
    onehot = ((season[:, :, None] == np.arange(n_seasons)) & valid[:, :, None]).astype(float)
    off = (np.arange(g) * m)[:, None]
    at_i, at_j = (off + i).ravel(), (off + j).ravel()

    def by_value(at, w):
        return np.bincount(at, weights=w, minlength=g * m).reshape(g, m)

    out = []
    if not time_ties:
        # every same-season pair is in time order (a = +1): A_i. = later - earlier values of i's
        # season and sum_j A_ij^2 = n_season - 1, counted directly (the same integers)
        earlier = ((np.cumsum(onehot, axis=1) - onehot) * onehot).sum(axis=2)
        n_own = (onehot * onehot.sum(axis=1, keepdims=True)).sum(axis=2)
        row = np.where(valid, n_own - 1 - 2 * earlier, 0.0)
        sq = np.where(valid, n_own - 1, 0.0)
        out.append((np.einsum("gi,gis->gs", row**2, onehot), np.einsum("gi,gis->gs", sq, onehot)))
    for w in ((b,) if not time_ties else (a, b)):
        w = w.ravel().astype(float)
        row = by_value(at_i, w) - by_value(at_j, w)  # A_i. for each value i
        w2 = np.abs(w)  # scores are -1, 0, 1: A_ij^2 = |A_ij|
        sq = by_value(at_i, w2) + by_value(at_j, w2)  # sum_j A_ij^2 for each value i
        out.append((np.einsum("gi,gis->gs", row**2, onehot), np.einsum("gi,gis->gs", sq, onehot)))
    (ra, sa2), (rb, sb2) = out
    n = onehot.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        one = np.where(n > 1, 2.0 / (n * (n - 1)) * sa2 * sb2, 0.0)
        two = np.where(n > 2, 4.0 / (n * (n - 1) * (n - 2)) * (ra - sa2) * (rb - sb2), 0.0)
    return ((one + two) / 4.0).sum(axis=1)


def _kendall_tie_variance(y, valid, season, n_seasons):
    """Kendall's (1975) tie-corrected Var(S), summed over seasons, for untied sampling times.

    [n(n-1)(2n+5) - sum over tie groups t(t-1)(2t+5)] / 18 per season (Gilbert 1987, eq. 16.4).
    """
    g, m = y.shape
    key = np.where(valid, season, n_seasons)
    order = np.argsort(np.where(valid, y, np.inf), axis=1, kind="stable")
    order = np.take_along_axis(order, np.argsort(np.take_along_axis(key, order, 1), axis=1,
                                                 kind="stable"), 1)
    ys, ks = np.take_along_axis(y, order, 1), np.take_along_axis(key, order, 1)
    new = np.ones((g, m), bool)
    new[:, 1:] = (ys[:, 1:] != ys[:, :-1]) | (ks[:, 1:] != ks[:, :-1])
    starts = np.flatnonzero(new)
    length = np.diff(np.append(starts, g * m)).astype(float)
    real = ks.ravel()[starts] < n_seasons
    ties = np.bincount(starts // m, weights=np.where(real, length * (length - 1) * (2 * length + 5), 0.0),
                       minlength=g)
    full = np.zeros(g)
    for k in range(n_seasons):  # a few seasons, vectorised over series
        n = (valid & (season == k)).sum(axis=1).astype(float)
        full += n * (n - 1) * (2 * n + 5)
    return (full - ties) / 18.0


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


def _trend_rows(t, y, nd, valid, season, z_crit, force_ats=False):
    """Trend statistics for each row of padded arrays sorted by time (see the module docstring)."""
    if t.shape[1] < 2:  # series of one value: pad with an empty cell so that the pair arrays exist
        t, y = (np.pad(a, ((0, 0), (0, 2 - a.shape[1])), constant_values=np.nan) for a in (t, y))
        nd, valid = (np.pad(a, ((0, 0), (0, 2 - a.shape[1])), constant_values=False) for a in (nd, valid))
        season = np.pad(season, ((0, 0), (0, 2 - season.shape[1])), constant_values=0)
    g, m = t.shape
    det = valid & ~nd
    nd = valid & nd
    i, j = np.triu_indices(m, 1)  # pairs i < j in time order
    n_seasons = int(season.max()) + 1 if season.size else 1
    pair = valid[:, j]
    if n_seasons > 1:
        pair &= season[:, i] == season[:, j]
    dt = t[:, j] - t[:, i]
    dt[~pair] = 0.0
    dy = y[:, j] - y[:, i]
    dy[~pair] = 0.0
    a = np.sign(dt).astype(np.int8)
    any_nd = bool(nd.any())
    if any_nd:
        # a pair of different seasons is no pair: without the mask a non-detect and a later detect of
        # another season scored +1 and entered the B row sums of Var(S) (the seasonal variance came
        # out too large; S was right because its time score is 0)
        b = _pair_scores(dy, det[:, i], det[:, j], nd[:, i], nd[:, j]) * pair
    else:
        b = np.sign(dy).astype(np.int8)
    s = np.einsum("gp,gp->g", a, b, dtype=np.int64).astype(float)
    time_ties = bool((pair & (dt == 0)).any())
    if any_nd or time_ties:
        var_s = _daniels_variance(a, b, i, j, valid, season, n_seasons, time_ties)
    else:
        var_s = _kendall_tie_variance(y, valid, season, n_seasons)
    n_s = np.stack([(valid & (season == k)).sum(axis=1) for k in range(n_seasons)], axis=1)
    pairs = (n_s * (n_s - 1) / 2).sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(s > 0, (s - 1) / np.sqrt(var_s), np.where(s < 0, (s + 1) / np.sqrt(var_s), 0.0))
        # every pair tied (all values equal, or every result <DL): S = 0 and Var(S) = 0; the
        # reference libraries report z = 0, p = 1 (no trend), not a blank
        z = np.where(var_s > 0, z, np.where(pairs > 0, 0.0, np.nan))
        tau = s / pairs
        # candidate slopes (values or DLs), later minus earlier, within a season, not both NDs
        usable = (dt > 0) & ~(nd[:, i] & nd[:, j])
        slopes = np.where(usable, dy / np.where(usable, dt, 1.0), np.nan)
    p = 2.0 * stats.norm.sf(np.abs(z))
    censored = nd.any(axis=1) | force_ats
    n_pairs = usable.sum(axis=1)
    c = np.nan_to_num(z_crit * np.sqrt(var_s), nan=0.0)
    # Sen slope: median of the pairwise slopes; CI by Gilbert (1987), ranks as scipy.theilslopes
    # each series' slope is selected once: the Sen ranks for series without non-detects, the
    # Akritas-Theil-Sen ranks for the others (the rows are taken apart; selection is the cost here)
    slope, low, high = (np.full(g, np.nan) for _ in range(3))
    sen_rows = np.flatnonzero(~censored)
    if sen_rows.size:
        k = n_pairs[sen_rows]
        ranks = np.stack([(k - 1) // 2, k // 2, np.round((k - c[sen_rows]) / 2.0) - 1,
                          np.round((k + c[sen_rows]) / 2.0)], axis=1)
        sen = _select(slopes[sen_rows], ranks, k)
        slope[sen_rows], low[sen_rows], high[sen_rows] = (sen[:, 0] + sen[:, 1]) / 2.0, sen[:, 2], sen[:, 3]
    ats_rows = np.flatnonzero(censored)
    if ats_rows.size:
        sl, u, d_ = slopes[ats_rows], usable[ats_rows], det[ats_rows]
        det_j = d_[:, j]
        both = d_[:, i] & det_j & u  # detect/detect pairs count twice in S(beta) (see _ats_ranks)
        ats = _select(np.concatenate([sl, np.where(both, sl, np.nan)], axis=1),
                      *_ats_ranks(both.sum(axis=1), (u & ~d_[:, i] & det_j).sum(axis=1), n_pairs[ats_rows],
                                  c[ats_rows]))
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
    return {
        "n": valid.sum(axis=1), "n_nondetect": nd.sum(axis=1), "s": s, "var_s": var_s, "z": z,
        "p_value": p, "tau": tau, "slope_per_year": slope, "slope_low": low, "slope_high": high,
        "slope_method": np.where(censored, "akritas_theil_sen", "sen"), "intercept": intercept,
        "t0": t0,
    }


def _select(values, ranks, n):
    """The ``ranks``-th smallest (0-based, clipped to 0 .. n - 1) of each row's valid values.

    ``values`` (g, L) holds each row's values with NaN in the other cells; ``n`` (g,) counts the
    valid ones. One partial sort (``numpy.partition``, introselect) at the ranks asked for, not a
    full sort of the row: the slopes' order statistics are all the Sen and Akritas-Theil-Sen
    estimates need. NaN where a row has no value.
    """
    ranks = np.clip(np.asarray(ranks, dtype=np.int64), 0, np.maximum(n - 1, 0)[:, None])
    kth = np.unique(ranks)
    if values.shape[1] == 0:
        return np.full(ranks.shape, np.nan)
    part = np.partition(values, np.clip(kth, 0, values.shape[1] - 1), axis=1)
    out = np.take_along_axis(part, ranks, axis=1)
    return np.where((n > 0)[:, None], out, np.nan)


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


def _long_trend_row(t, y, nd, season, z_crit, force_ats=False) -> dict:
    """:func:`_trend_rows` for one long series (sorted by time) without its pairs (see :mod:`.long_series`)."""
    s, var_s, pairs = long_series.kendall_s_var(t, y, nd, season)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = (s - np.sign(s)) / np.sqrt(var_s) if var_s > 0 else (0.0 if pairs > 0 else np.nan)
    p = 2.0 * stats.norm.sf(abs(z))
    censored = bool(nd.any()) or force_ats
    counts = long_series.SlopeCounts(t, y, nd, season)
    n_pairs, n_dd, n_nd_d = counts.usable()
    c = float(np.nan_to_num(z_crit * np.sqrt(var_s), nan=0.0))
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
    return {"n": t.size, "n_nondetect": int(nd.sum()), "s": s, "var_s": var_s, "z": z, "p_value": p,
            "tau": s / pairs if pairs else np.nan, "slope_per_year": slope, "slope_low": low, "slope_high": high,
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
    z_crit = stats.norm.ppf(1 - alpha / 2)
    cols = {c: np.full(n_groups, np.nan) for c in TREND_COLUMNS}
    cols["slope_method"] = np.full(n_groups, None, dtype=object)
    cols["n"][:] = cols["n_nondetect"][:] = 0
    size = np.bincount(codes, minlength=n_groups)
    for g in np.flatnonzero(size > long_series.LONG_SERIES):  # a few long series, each without its pairs
        at = np.flatnonzero(codes == g)
        at = at[np.argsort(t[at], kind="stable")]
        row = _long_trend_row(t[at], y[at], nd[at], season[at], z_crit, force_ats)
        for col in TREND_COLUMNS:
            cols[col][g] = row[col]
    short = size[codes] <= long_series.LONG_SERIES
    if not short.all():
        t, y, nd, season, codes = t[short], y[short], nd[short], season[short], codes[short]
    for chunk in chunks(codes, n_groups, order=t, cells=lambda m: m * (m - 1) // 2,
                        budget=PAIR_BUDGET):
        r = _trend_rows(chunk.take(t, np.nan), chunk.take(y, np.nan), chunk.take(nd, False),
                        chunk.valid, chunk.take(season, -1), z_crit, force_ats)
        for col in TREND_COLUMNS:
            cols[col][chunk.groups] = r[col]
    return pd.DataFrame(cols)


def mann_kendall(times, values, nondetect=None, seasons=None, alpha=0.05) -> dict:
    """Mann-Kendall (or seasonal Kendall) test with Sen / ATS slope for one series.

    See :func:`mann_kendall_grouped` for parameters and the module docstring for the methods.
    Returns a dict with the :data:`TREND_COLUMNS`.
    """
    y = np.asarray(values, dtype=float)
    out = mann_kendall_grouped(times, y, nondetect, np.zeros(y.size, np.int64), 1, seasons, alpha)
    return out.iloc[0].to_dict()
