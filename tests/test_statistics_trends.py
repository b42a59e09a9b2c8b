"""Trend tests checked against pymannkendall, scipy.stats.theilslopes, exact enumeration and hand counts."""

import itertools

import numpy as np
import pandas as pd
import pymannkendall as mk
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import stats

from tracescreen.statistics import mann_kendall, trends
from tracescreen.statistics.series import date_from_decimal_year, decimal_years

RNG = np.random.default_rng(2024)
UNCENSORED = {
    "noise_with_drift": RNG.normal(0, 1, 30) + 0.05 * np.arange(30),
    "rounded_many_ties": np.round(RNG.normal(5, 2, 25)),
    "step_ties": np.array([1, 2, 2, 3, 3, 3, 4, 4, 4, 4, 5.0]),
    "short": np.array([3.1, 2.0, 4.4, 4.0, 5.2, 6.1, 5.9, 7.0]),
    "lognormal_60": RNG.lognormal(0, 1, 60),
}


def _one(times, y, nd=None, seasons=None, **kw):
    return mann_kendall.mann_kendall(times, y, nd, seasons, **kw)


@pytest.mark.parametrize("name", list(UNCENSORED))
def test_mann_kendall_matches_pymannkendall(name):
    """S, Var(S), z, p, tau, Sen slope and intercept equal pymannkendall.original_test (S exact, others rtol/atol 1e-12)."""
    y = UNCENSORED[name]
    r = _one(np.arange(y.size, dtype=float), y)
    ref = mk.original_test(y)
    assert r["s"] == ref.s
    assert_allclose(r["var_s"], ref.var_s, rtol=1e-12)
    assert_allclose([r["z"], r["p_value"], r["tau"]], [ref.z, ref.p, ref.Tau], rtol=1e-12, atol=1e-12)
    assert_allclose([r["slope_per_year"], r["intercept"]], [ref.slope, ref.intercept], rtol=1e-12, atol=1e-12)
    assert r["slope_method"] == "sen"


@pytest.mark.parametrize("name", list(UNCENSORED))
def test_all_detected_flags_give_the_ordinary_test(name):
    """With nondetect all False the censored machinery reduces to the ordinary test (pymannkendall, exact S)."""
    y = UNCENSORED[name]
    r = _one(np.arange(y.size, dtype=float), y, np.zeros(y.size, bool))
    ref = mk.original_test(y)
    assert (r["s"], r["slope_per_year"]) == (ref.s, ref.slope)


@pytest.mark.parametrize("period,cycles", [(4, 12), (12, 5)])
def test_seasonal_kendall_matches_pymannkendall(period, cycles):
    """Seasonal Kendall S, Var(S), z, p, tau and seasonal Sen slope equal pymannkendall.seasonal_test (rtol 1e-9)."""
    n = period * cycles
    y = RNG.normal(0, 1, n) + np.tile(np.linspace(-2, 2, period), cycles) + 0.02 * np.arange(n)
    y = np.round(y, 1)  # ties within seasons
    r = _one(np.arange(n) / period, y, seasons=np.arange(n) % period)
    ref = mk.seasonal_test(y, period=period)
    assert r["s"] == ref.s
    assert_allclose([r["var_s"], r["z"], r["p_value"], r["tau"]], [ref.var_s, ref.z, ref.p, ref.Tau], rtol=1e-9)
    assert_allclose([r["slope_per_year"], r["intercept"]], [ref.slope, ref.intercept], rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("name", list(UNCENSORED))
def test_sen_interval_matches_scipy_theilslopes(name):
    """Gilbert's 95 % Sen-slope interval equals scipy.stats.theilslopes(alpha=0.95) low/high slopes (rtol 1e-12)."""
    y = UNCENSORED[name]
    t = np.sort(RNG.uniform(2015, 2025, y.size))  # irregular real sampling times
    r = _one(t, y)
    ref = stats.theilslopes(y, t, alpha=0.95)
    assert_allclose([r["slope_per_year"], r["slope_low"], r["slope_high"]],
                    [ref.slope, ref.low_slope, ref.high_slope], rtol=1e-12)
    # scipy's intercept is at t = 0; ours is the line's value at the first sampling time
    assert_allclose(r["intercept"], ref.intercept + ref.slope * t[0], rtol=1e-9)


def test_variance_is_exact_permutation_variance_with_censoring_and_time_ties():
    """Var(S) equals the variance of S over all 7! orderings (exact enumeration), with NDs and tied dates."""
    t = np.array([0, 1, 1, 2, 3, 3, 4.0])
    y = np.array([2, 1.5, 2, 3, 1, 4, 5.0])
    nd = np.array([1, 0, 1, 0, 0, 1, 0], bool)
    r = _one(t, y, nd)
    perms = np.array(list(itertools.permutations(range(7))))
    codes = np.repeat(np.arange(len(perms)), 7)
    s_all = mann_kendall.mann_kendall_grouped(np.tile(t, len(perms)), y[perms].ravel(), nd[perms].ravel(),
                                        codes, len(perms))["s"].to_numpy()
    assert r["s"] in s_all
    assert_allclose(r["var_s"], np.var(s_all), rtol=1e-12)


def test_censored_pair_scores_by_hand():
    """Helsel (2012, sec. 12.2) pair rules counted by hand for <1, 2, <1, 3, <5, 6 give S = 9 - 1 = 8."""
    # (earlier, later): (<1,2)+1 (<1,<1)0 (<1,3)+1 (<1,<5)0 (<1,6)+1 (2,<1)-1 (2,3)+1 (2,<5)0
    # (2,6)+1 (<1,3)+1 (<1,<5)0 (<1,6)+1 (3,<5)0 (3,6)+1 (<5,6)+1: nine +1, one -1
    y = np.array([1, 2, 1, 3, 5, 6.0])
    nd = np.array([1, 0, 1, 0, 1, 0], bool)
    assert _one(np.arange(6.0), y, nd)["s"] == 8


def _censored_s(t, y, nd, beta):
    """Slow reference: censored Kendall S of residuals y - beta t by Helsel's pair rules."""
    e = y - beta * t
    s = 0
    for i in range(len(y)):
        for j in range(len(y)):
            if t[j] <= t[i]:
                continue
            gt = (not nd[j]) and (e[j] > e[i] or (nd[i] and e[j] >= e[i]))
            lt = (not nd[i]) and (e[i] > e[j] or (nd[j] and e[i] >= e[j]))
            s += int(gt) - int(lt)
    return s


@pytest.mark.parametrize("seed", [1, 2, 3, 4])
def test_ats_slope_zeroes_the_censored_s(seed):
    """The ATS slope sits where the residuals' censored S changes sign (Akritas et al. 1995), by a slow loop."""
    rng = np.random.default_rng(seed)
    t = np.sort(rng.uniform(0, 10, 30))
    true = rng.lognormal(0, 0.5, 30) + 0.1 * t
    dl = rng.choice([0.8, 1.0], 30)
    nd = true < dl
    y = np.where(nd, dl, true)
    r = _one(t, y, nd)
    assert r["slope_method"] == "akritas_theil_sen"
    eps = 1e-7
    assert _censored_s(t, y, nd, r["slope_per_year"] - eps) >= 0 >= _censored_s(t, y, nd, r["slope_per_year"] + eps)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.integers(0, 30), min_size=3, max_size=25))
def test_ats_without_censoring_is_the_sen_median(ys):
    """Forcing the ATS search on uncensored data gives the Theil-Sen median of scipy.stats.theilslopes (property)."""
    y = np.array(ys, float)
    t = np.arange(y.size, dtype=float)
    r = mann_kendall.mann_kendall_grouped(t, y, None, np.zeros(y.size, int), 1, force_ats=True).iloc[0]
    assert r["slope_per_year"] == pytest.approx(stats.theilslopes(y, t).slope, abs=1e-12)


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 40), st.booleans())
def test_monotone_series_give_extreme_s(n, rising):
    """A strictly monotone series gives S = ±n(n-1)/2 and tau = ±1 (definition of S, Kendall 1975)."""
    y = np.arange(n, dtype=float) * (1 if rising else -1)
    r = _one(np.arange(n, dtype=float), y)
    assert r["s"] == (1 if rising else -1) * n * (n - 1) / 2
    assert r["tau"] == (1 if rising else -1)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(0.1, 100), min_size=4, max_size=30), st.integers(-7, 10).map(lambda e: 2.0 ** e))
def test_scaling_concentrations_scales_slopes(xs, k):
    """Multiplying concentrations (and DLs) by k multiplies slope, interval and intercept by k; S unchanged (property).

    k is a power of two, so ``y * k`` is exact in binary floating point and keeps every order and
    tie of ``y``; an arbitrary k can round two values 1 ulp apart into one (92.0 and
    91.99999999999999 times 712.8 became equal: S 3 vs 4), which is float rounding, not the method.
    """
    y = np.array(xs)
    nd = y < np.median(y)
    y = np.where(nd, np.round(np.median(y), 2), y)
    t = np.arange(y.size) / 4.0
    a, b = _one(t, y, nd), _one(t, y * k, nd)
    assert a["s"] == b["s"]
    for col in ("slope_per_year", "slope_low", "slope_high"):
        assert b[col] == pytest.approx(k * a[col], rel=1e-9, abs=1e-9 * max(1.0, k))


def test_grouped_equals_single_series_with_mixed_lengths():
    """The vectorised grouped run gives each series' single-run result (lengths 3..80, several buckets)."""
    rng = np.random.default_rng(3)
    sizes = rng.integers(3, 80, 25)
    codes = np.repeat(np.arange(25), sizes)
    t = rng.uniform(2010, 2020, codes.size)
    y = rng.lognormal(0, 1, codes.size).round(2)
    nd = rng.random(codes.size) < 0.2
    y = np.where(nd, 0.5, y)
    table = mann_kendall.mann_kendall_grouped(t, y, nd, codes, 25)
    for g in (0, 7, 24):
        one = _one(t[codes == g], y[codes == g], nd[codes == g])
        for col in ("s", "var_s", "p_value", "slope_per_year", "slope_low", "slope_high", "intercept"):
            assert table.loc[g, col] == pytest.approx(one[col], rel=1e-12, nan_ok=True)


def test_slope_is_per_year_from_real_dates():
    """Values rising 3 µg/L per 365.25 days give a Sen slope of 3 per year from the dates (not the row index)."""
    dates = pd.to_datetime(["2020-01-01", "2020-03-15", "2021-01-01", "2022-06-30", "2023-01-10"])
    t = decimal_years(dates)
    y = 10 + 3 * (t - t[0])
    r = _one(t, y)
    assert r["slope_per_year"] == pytest.approx(3.0, rel=1e-12)
    back = date_from_decimal_year(t)
    assert (back.dt.normalize() == dates).all()


def _series(site, dates, values, nondetect=None, analyte="arsenic"):
    nd = np.zeros(len(values), bool) if nondetect is None else np.asarray(nondetect, bool)
    v = np.asarray(values, float)
    return pd.DataFrame({
        "site_id": site, "analyte": analyte, "fraction": "dissolved", "sampled_at": pd.to_datetime(dates),
        "value_ug_L": np.where(nd, np.nan, v), "detected": ~nd,
        "detection_limit_ug_L": np.where(nd, v, 0.1), "sample_type": "sample",
    })


def test_table_chooses_seasonal_kendall_for_quarterly_and_monthly_records():
    """Quarterly over 4 years -> 4 seasons, monthly over 3 years -> 12, irregular -> Mann-Kendall (Hirsch et al. 1982)."""
    rng = np.random.default_rng(8)
    q = pd.date_range("2019-02-10", periods=16, freq="3MS") + pd.Timedelta(days=9)
    m = pd.date_range("2019-01-05", periods=36, freq="MS")
    irregular = pd.to_datetime("2019-01-01") + pd.to_timedelta(np.sort(rng.uniform(0, 1500, 20)), "D")
    data = pd.concat([_series("Q", q, rng.lognormal(0, 1, 16)), _series("M", m, rng.lognormal(0, 1, 36)),
                      _series("I", irregular, rng.lognormal(0, 1, 20))])
    tests = trends.trend_table(data).set_index("site_id")["test"]
    assert tests.to_dict() == {"I": "mann_kendall", "M": "seasonal_kendall_12_seasons",
                               "Q": "seasonal_kendall_4_seasons"}
    assert (trends.trend_table(data, seasonal="never")["test"] == "mann_kendall").all()


def test_table_direction_too_few_and_qc_left_out():
    """Below 8 values the direction is too_few (common practice); QC rows do not count."""
    dates = pd.date_range("2020-01-01", periods=7, freq="60D")
    data = pd.concat([_series("A", dates, np.arange(7.0)),
                      _series("A", dates[:3], [50.0, 60, 70]).assign(sample_type="field_duplicate")])
    r = trends.trend_table(data).iloc[0]
    assert (r["n"], r["direction"]) == (7, "too_few")
    data8 = _series("A", pd.date_range("2020-01-01", periods=8, freq="60D"), np.arange(8.0))
    assert trends.trend_table(data8).iloc[0]["direction"] == "increasing"


def test_crosses_limit_on_from_sen_line():
    """y = 1 + 2 per year reaches a 20 µg/L limit 9.5 years after the first sample (line arithmetic)."""
    dates = pd.date_range("2018-01-01", periods=12, freq="100D")
    t = decimal_years(dates)
    data = _series("A", dates, 1 + 2 * (t - t[0]))
    limits = pd.DataFrame({"site_id": ["A"], "analyte": "arsenic", "fraction": "dissolved",
                           "limit_ug_L": [20.0], "limit_table": ["x"]})
    r = trends.trend_table(data, limits=limits).iloc[0]
    expected = pd.Timestamp("2018-01-01") + pd.Timedelta(days=9.5 * 365.25)
    assert abs(r["crosses_limit_on"] - expected) <= pd.Timedelta(days=1)
    assert "extrapolation" in r["note"]
    low = limits.assign(limit_ug_L=5.0)  # already above at the last sample: no date
    r = trends.trend_table(data, limits=low).iloc[0]
    assert pd.isna(r["crosses_limit_on"]) and "already" in r["note"]


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(0.0, 50.0), min_size=3, max_size=30))
def test_censoring_nothing_changes_nothing(xs):
    """A series without non-detects gets exactly the uncensored test and Sen slope when it is computed beside
    a series holding a non-detect (Helsel 2012 reduction: the pair rules reduce to the ordinary ones; the
    Daniels variance of a censored series equals Kendall's tie-corrected one without non-detects, checked
    against full pair matrices in test_statistics_long_series.py)."""
    y = np.round(np.array(xs), 1)
    t = np.arange(y.size) / 4.0
    alone = _one(t, y)
    companion = np.zeros(y.size, bool)
    companion[0] = True
    both = mann_kendall.mann_kendall_grouped(np.r_[t, t], np.r_[y, y], np.r_[np.zeros(y.size, bool), companion],
                                             np.repeat([0, 1], y.size), 2)
    assert both.iloc[1]["slope_method"] == "akritas_theil_sen"  # the companion took the censored path
    for col in ("s", "var_s", "p_value", "slope_per_year", "slope_low", "slope_high", "intercept"):
        assert both.iloc[0][col] == pytest.approx(alone[col], nan_ok=True, rel=1e-12), col


def _brute_force_s(t, y, nd):
    """Kendall's S by enumerating every pair with Helsel's (2012, sec. 12.2) rules, written independently
    of the engine: a pair in time order scores +1 / -1 when the order of the true values is known, else 0.
    A non-detect's true value is below its detection limit; tied times score 0."""
    s = 0
    for i in range(len(y)):
        for j in range(len(y)):
            if not t[i] < t[j]:
                continue
            lo_i, hi_i = (0.0, y[i]) if nd[i] else (y[i], y[i])  # the interval holding each true value
            lo_j, hi_j = (0.0, y[j]) if nd[j] else (y[j], y[j])
            if lo_j > hi_i or (nd[i] and not nd[j] and lo_j >= hi_i):  # later surely higher
                s += 1
            elif lo_i > hi_j or (nd[j] and not nd[i] and lo_i >= hi_j):  # later surely lower
                s -= 1
    return s


@settings(max_examples=60, deadline=None)
@given(st.integers(0, 2**31 - 1), st.integers(5, 30))
def test_censored_s_equals_brute_force_pair_enumeration(seed, n):
    """Censored S equals an independent enumeration of every pair's score, on random series with several
    detection limits, values tied with a detection limit and tied sampling times (reference: the pair
    rules of Helsel 2012, sec. 12.2, coded separately in this test)."""
    rng = np.random.default_rng(seed)
    t = np.sort(rng.integers(0, n, n)).astype(float)  # tied times
    dl = rng.choice([0.5, 1.0, 2.0], n)
    true = np.round(rng.lognormal(0.0, 1.0, n), 1)
    nd = true < dl
    y = np.where(nd, dl, np.where(rng.random(n) < 0.1, dl, true))  # some detects equal to a DL
    assert _one(t, y, nd)["s"] == _brute_force_s(t, y, nd)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_censored_variance_equals_brute_force_permutation_variance(seed):
    """Var(S) equals the variance of the brute-force S over all 7! assignments of the values to the
    sampling times (the definition of the permutation variance under "no trend", Daniels 1944), with
    non-detects at two detection limits and a tied time; S is the independent enumeration above."""
    rng = np.random.default_rng(seed)
    t = np.array([0, 1, 1, 2, 3, 4, 5.0])
    dl = rng.choice([1.0, 2.0], 7)
    true = np.round(rng.lognormal(0.0, 0.8, 7), 1)
    nd = true < dl
    y = np.where(nd, dl, true)
    assert nd.any() and (~nd).any()
    s_all = np.array([_brute_force_s(t, y[list(p)], nd[list(p)]) for p in itertools.permutations(range(7))])
    r = _one(t, y, nd)
    assert r["s"] == _brute_force_s(t, y, nd)
    assert_allclose(r["var_s"], np.mean(s_all.astype(float) ** 2), rtol=1e-12)  # E[S] = 0 under permutation
    assert abs(s_all.mean()) < 1e-9


def test_series_of_one_value_gives_no_statistic_instead_of_an_error():
    """A series with a single result (censored or not) has no pairs: S = 0 and no slope (common practice)."""
    for nd in (np.array([True]), np.array([False])):
        r = mann_kendall.mann_kendall_grouped(np.array([2021.2]), np.array([0.5]), nd, np.zeros(1, int), 1).iloc[0]
        assert r["n"] == 1 and r["s"] == 0
        assert np.isnan(r["slope_per_year"])


def test_all_tied_series_gives_no_trend_like_pymannkendall():
    """A series whose values are all tied -- a constant series, or every result below one detection
    limit -- has S = 0, z = 0 and p = 1, as pymannkendall.original_test reports, and direction
    no_trend with a note (not a blank z and p)."""
    y = np.full(12, 0.5)
    ref = mk.original_test(y)
    for nd in (None, np.ones(12, bool)):
        r = _one(np.arange(12, dtype=float), y, nd)
        assert (r["s"], r["var_s"]) == (ref.s, ref.var_s) == (0, 0)
        assert (r["z"], r["p_value"]) == (ref.z, ref.p) == (0, 1)
    dates = pd.date_range("2020-01-01", periods=12, freq="90D")
    data = _series("A", dates, np.full(12, 1.0)).assign(value_ug_L=np.nan, detected=False)
    row = trends.trend_table(data, seasonal="never").iloc[0]
    assert (row["z"], row["p_value"], row["direction"]) == (0, 1, "no_trend")
    assert "all values tied" in row["note"]


def _brute_seasonal_sen(t, y, season):
    """Median of the within-season pairwise slopes, later minus earlier, pairs tied in time left out
    (the seasonal Sen slope by its definition, Hirsch, Slack & Smith 1982; Sen 1968)."""
    slopes = [(y[b] - y[a]) / (t[b] - t[a]) for a, b in itertools.permutations(range(t.size), 2)
              if season[a] == season[b] and t[b] > t[a]]
    return np.median(slopes) if slopes else np.nan


@settings(max_examples=40, deadline=None, derandomize=True)
@given(st.integers(0, 2**31 - 1), st.integers(1, 7))
def test_many_seasonal_series_at_once_equal_each_series_alone(seed, n_series):
    """Ragged series of 1, 4 or 12 seasons, unsorted, with tied times and non-detects, slopes of all at once
    (pairs built within a season's block of each row) equal: the brute-force seasonal Sen median (exact) for
    series without non-detects, and the counting path of long series (long_series, to its SLOPE_RTOL) for
    the Akritas-Theil-Sen slope, interval and intercept of series with non-detects."""
    rng = np.random.default_rng(seed)
    n = 150
    codes = rng.integers(0, n_series, n)
    periods = rng.choice([1, 4, 12], n_series)
    t = 2000 + rng.integers(0, 60, n) / 12.0  # monthly dates, some repeated
    month = np.round((t % 1) * 12).astype(int) % 12
    season = np.select([periods[codes] == 12, periods[codes] == 4], [month, month // 3], 0)
    y = np.round(rng.lognormal(0, 0.7, n) + 0.05 * (t - 2000), 1)
    nd = (rng.random(n) < 0.25) & (codes % 2 == 1)  # odd series censored, even ones not
    got = mann_kendall.mann_kendall_grouped(t, y, nd, codes, n_series, seasons=season)
    for k in range(n_series):
        at = np.flatnonzero(codes == k)
        if at.size == 0:
            continue
        at = at[np.argsort(t[at], kind="stable")]
        if not nd[at].any():
            assert got["slope_per_year"][k] == pytest.approx(_brute_seasonal_sen(t[at], y[at], season[at]),
                                                             rel=1e-12, abs=1e-12, nan_ok=True)
            continue
        ref = mann_kendall._long_trend_row(t[at], y[at], nd[at], season[at], stats.norm.ppf(0.975) * np.sqrt(got["var_s"][k]))
        for col in ("slope_per_year", "slope_low", "slope_high", "intercept"):
            assert_allclose(got[col][k], ref[col], rtol=1e-7, atol=1e-9, err_msg=col)


@pytest.mark.parametrize("many_categories", [False, True])
def test_latest_date_rows_equal_pandas_groupby_max(many_categories):
    """The rows on each series' latest sampling date, worked out on category codes, equal pandas'
    groupby(...).transform("max") (the reference library), with missing keys and dates left out."""
    from tracescreen.statistics.trends import _on_latest_date

    rng = np.random.default_rng(7)
    n = 3000
    sites = [f"S{k}" for k in range(5000 if many_categories else 12)]
    d = pd.DataFrame({
        "site_id": pd.Categorical(rng.choice(sites[:12] + [None], n), categories=sites),
        "analyte": pd.Categorical(rng.choice(["Cu", "Zn", "Pb", None], n)),
        "fraction": pd.Categorical(rng.choice(["total", "dissolved"], n)),
        "sampled_at": pd.Series(pd.to_datetime("2020-01-01") + pd.to_timedelta(rng.integers(0, 40, n), "D")),
    })
    d.loc[rng.random(n) < 0.05, "sampled_at"] = pd.NaT
    keys = ["site_id", "analyte", "fraction"]
    expected = (d["sampled_at"] == d.groupby(keys, observed=True)["sampled_at"].transform("max")).to_numpy()
    assert np.array_equal(_on_latest_date(d, keys), expected)
    plain = d.astype({"site_id": object})  # not categorical: pandas' own groupby
    assert np.array_equal(_on_latest_date(plain, keys), expected)
