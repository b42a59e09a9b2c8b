"""Long series (statistics/long_series.py): the same Mann-Kendall / seasonal Kendall numbers without the pairs.

Sources: pymannkendall (PyPI, the reference library of the trend tests: original_test and seasonal_test);
Hirsch, Slack & Smith 1982 (the seasonal Kendall S and Var(S) are the sums of each season's S and Var(S));
pair counts and censored pair scores checked by brute-force enumeration coded in this file (the pair rules of
Helsel 2012, sec. 12.2); the pairwise kernel of statistics/mann_kendall.py, itself checked against
pymannkendall, scipy.stats.theilslopes and the permutation variance in test_statistics_trends.py.
"""

import numpy as np
import pymannkendall as pmk
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from tracescreen.statistics import long_series, mann_kendall

Z95 = 1.959963984540054  # norm.ppf(0.975)


@settings(max_examples=80, deadline=None, derandomize=True)
@given(st.integers(0, 2**31 - 1), st.integers(2, 40), st.integers(1, 3))
def test_count_pairs_equals_enumeration(seed, n, groups):
    rng = np.random.default_rng(seed)
    tr = rng.integers(0, n, n)  # tied times
    g = rng.integers(0, groups, n)
    a, b = rng.integers(0, 5, n).astype(float), rng.integers(0, 5, n).astype(float)
    brute = ((g[:, None] == g[None, :]) & (tr[:, None] < tr[None, :]) & (a[:, None] < b[None, :])).sum()
    assert long_series.count_pairs(tr, g, a, b) == brute


def _series(rng, n, censored, tied_times, seasons):
    t = 2000 + (np.sort(rng.integers(0, n, n)) if tied_times else np.arange(n)) / 12.0
    y = np.round(rng.lognormal(0.0, 0.5, n) + 0.002 * np.arange(n), 1)
    dl = np.where(np.arange(n) < n // 2, 1.0, 0.7)
    nd = (y < dl) & censored
    return t, np.where(nd, dl, y), nd, (np.arange(n) % 4 if seasons else np.zeros(n, np.int64))


def _brute_s_var(t, y, nd, season):
    """Censored S and Daniels' (1944) permutation variance by full matrices, per season, summed.

    A_ij = sign(t_j - t_i); B_ij = +1 where j is certainly above i (a detect at or above a non-detect's DL,
    or above a detect), -1 certainly below, 0 otherwise (Helsel 2012, sec. 12.2); Var = [2/(n(n-1)) sum A^2
    sum B^2 + 4/(n(n-1)(n-2)) (sum_i A_i.^2 - sum A^2)(sum_i B_i.^2 - sum B^2)] / 4 over the full matrices.
    """
    s = var = 0.0
    for k in np.unique(season):
        at = season == k
        tk, yk, ndk = t[at], y[at], nd[at]
        n = float(tk.size)
        a = np.sign(tk[None, :] - tk[:, None])
        dy = yk[None, :] - yk[:, None]
        det_i, det_j = ~ndk[:, None], ~ndk[None, :]
        above = det_j & ((dy > 0) | (~det_i & (dy >= 0)))
        below = det_i & ((dy < 0) | (~det_j & (dy <= 0)))
        b = above.astype(float) - below.astype(float)
        s += np.triu(a * b, 1).sum()
        sa2, sb2 = (a**2).sum(), (b**2).sum()
        one = 2.0 / (n * (n - 1)) * sa2 * sb2 if n > 1 else 0.0
        two = 4.0 / (n * (n - 1) * (n - 2)) * ((a.sum(1) ** 2).sum() - sa2) * ((b.sum(1) ** 2).sum() - sb2) if n > 2 else 0.0
        var += (one + two) / 4.0
    return s, var


@pytest.mark.parametrize("censored", [False, True])
@pytest.mark.parametrize("tied_times", [False, True])
@pytest.mark.parametrize("seasons", [False, True])
def test_long_path_equals_the_pairwise_kernel(censored, tied_times, seasons):
    """S and Var(S) from counts equal their definition by full pair matrices (S exact, Var rtol 1e-12); the
    long path's slopes, interval and intercept equal the pairwise kernel's (to long_series.SLOPE_RTOL)."""
    rng = np.random.default_rng(7 + 2 * censored + 4 * tied_times + 8 * seasons)
    t, y, nd, season = _series(rng, 301, censored, tied_times, seasons)
    s, var_s, _ = long_series.kendall_s_var(t, y, nd, season)
    brute_s, brute_var = _brute_s_var(t, y, nd, season)
    assert s == brute_s
    assert var_s == pytest.approx(brute_var, rel=1e-12)
    ref = mann_kendall.mann_kendall(t, y, nd, season if seasons else None)
    assert ref["s"] == brute_s and ref["var_s"] == pytest.approx(brute_var, rel=1e-12)
    got = mann_kendall._long_trend_row(t, y, nd, season, Z95 * np.sqrt(var_s))
    assert got["slope_method"] == ref["slope_method"]
    for col in ("slope_per_year", "slope_low", "slope_high", "intercept", "t0"):
        assert_allclose(got[col], ref[col], rtol=1e-8, atol=1e-12, err_msg=col)


@settings(max_examples=60, deadline=None, derandomize=True)
@given(st.integers(0, 2**31 - 1), st.integers(1, 6), st.integers(1, 3))
def test_grouped_counts_equal_each_series_alone(seed, n_series, n_seasons):
    """Many series at once (kendall_grouped) give each series' own S and Var(S) (brute force above), with
    tied times, tied values and non-detects; a code without values gets NaN."""
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, n_series, 60)
    t = 2000 + rng.integers(0, 30, 60) / 4.0
    y = rng.integers(1, 6, 60).astype(float)
    nd = rng.random(60) < 0.3
    season = rng.integers(0, n_seasons, 60)
    s, var, _ = long_series.kendall_grouped(t, y, nd, season, codes, n_series + 1)
    for k in range(n_series):
        at = codes == k
        if not at.any():
            assert np.isnan(s[k])
            continue
        bs, bv = _brute_s_var(t[at], y[at], nd[at], season[at])
        assert s[k] == bs
        assert var[k] == pytest.approx(bv, rel=1e-12, abs=1e-12)
    assert np.isnan(s[n_series]) and np.isnan(var[n_series])


def test_seasonal_variance_with_non_detects_is_the_sum_of_the_seasons():
    """Hirsch, Slack & Smith (1982): Var(S) of the seasonal Kendall test is the sum of each season's Var(S).
    The pairwise kernel used to count a non-detect and a later detect of another season as a scored pair
    in the variance's row sums: 1,743 instead of 782 here (p-values too large, trends missed)."""
    rng = np.random.default_rng(3)
    n = 30
    t = 2000 + np.arange(n) / 12.0
    y = np.round(rng.lognormal(0, 0.5, n), 1)
    nd = y < 0.8
    y = np.where(nd, 0.8, y)
    season = np.arange(n) % 2
    per_season = sum(mann_kendall.mann_kendall(t[season == k], y[season == k], nd[season == k])["var_s"]
                     for k in (0, 1))
    assert per_season == pytest.approx(782.0)  # the two seasons' exact permutation variances
    assert mann_kendall.mann_kendall(t, y, nd, season)["var_s"] == pytest.approx(per_season, rel=1e-12)
    assert long_series.kendall_s_var(t, y, nd, season)[1] == pytest.approx(per_season, rel=1e-12)


def test_a_series_past_the_long_threshold_matches_pymannkendall():
    """A series of LONG_SERIES + 500 values goes through the long path in mann_kendall_grouped beside a short
    series; S, Var(S), z, p, tau and the Sen slope equal pymannkendall.original_test (yearly steps: slope per
    year = pymannkendall's slope per step)."""
    rng = np.random.default_rng(11)
    n = long_series.LONG_SERIES + 500
    y = np.round(rng.normal(0, 1, n) + 0.00003 * np.arange(n), 2)  # rounded: ties in the values
    short = rng.normal(0, 1, 30)
    t = np.concatenate([np.arange(n), np.arange(30)]).astype(float)
    codes = np.concatenate([np.zeros(n, np.int64), np.ones(30, np.int64)])
    out = mann_kendall.mann_kendall_grouped(t, np.concatenate([y, short]), None, codes, 2)
    for row, values in ((out.iloc[0], y), (out.iloc[1], short)):
        ref = pmk.original_test(values)
        assert row["s"] == ref.s
        assert_allclose([row["var_s"], row["z"], row["p_value"], row["tau"]], [ref.var_s, ref.z, ref.p, ref.Tau],
                        rtol=1e-9)
        assert_allclose(row["slope_per_year"], ref.slope, rtol=1e-7)


def test_seasonal_long_series_matches_pymannkendall_seasonal_test():
    """Monthly seasons over 300 years (3,600 values, past the threshold): seasonal Kendall S, Var(S), z, p equal
    pymannkendall.seasonal_test (period 12)."""
    rng = np.random.default_rng(12)
    n = 3600
    y = np.round(rng.normal(0, 1, n) + 0.00002 * np.arange(n) + np.sin(np.arange(n) * np.pi / 6), 2)
    t = np.arange(n) / 12.0
    got = mann_kendall.mann_kendall(t, y, None, np.arange(n) % 12)
    ref = pmk.seasonal_test(y, period=12)
    assert got["s"] == ref.s
    assert_allclose([got["var_s"], got["z"], got["p_value"]], [ref.var_s, ref.z, ref.p], rtol=1e-9)
    assert_allclose(got["slope_per_year"], ref.slope, rtol=1e-7)  # both per year (period steps)
