"""Non-parametric limits, tolerance limits, confidence limits, outlier and background tests against
the Unified Guidance's worked examples (USEPA 2009; tests/data/usepa2009/README.md says where each
value comes from), scipy and seeded simulation."""

import numpy as np
import pytest
from scipy import stats
from usepa2009_examples import cells, example

from tracescreen.statistics.background import confidence as ci
from tracescreen.statistics.background.checks import pooled_sd, spatial_variability
from tracescreen.statistics.background.control_charts import CHART_STATUSES, shewhart_cusum
from tracescreen.statistics.background.land import land_limit
from tracescreen.statistics.background.nonparametric import achieved_confidence, choose_rank
from tracescreen.statistics.background.outliers import DIXON_CRITICAL, dixon_ratio, rosner_test
from tracescreen.statistics.background.plans import parse_plan
from tracescreen.statistics.background.tolerance import (
    nonparametric_confidence,
    nonparametric_coverage,
    normal_tolerance_factor,
    parametric_utl,
)

# --------------------------------------------------------------------------- non-parametric limits

def test_example_19_5_achieved_false_positive_rates():
    """Example 19-5 (n = 20, r = 10 wells x 1 evaluation): the 18 achieved rates for six plans and
    the three highest background values, to the 4 decimals printed."""
    ex = example("19_5_mercury")
    for plan, order, rank, alpha, _ in ex["published"]["achieved"]:
        got = 1 - achieved_confidence(20, rank, parse_plan(plan, order), 10)
        assert got == pytest.approx(alpha, abs=5e-5), (plan, order, rank)


def test_example_19_5_background_limits_and_plan_choice():
    """Example 19-5: the three highest background values 0.28, 0.25, 0.24; with the per-constituent
    target 0.02085, 1-of-2 fails at the maximum and 1-of-3 on the maximum is the first plan that meets it."""
    ex = example("19_5_mercury")
    bg = np.concatenate([cells(v)[0] for k, v in ex["wells"].items() if k.startswith("BG")])
    assert sorted(bg, reverse=True)[:3] == [0.28, 0.25, 0.24]
    target = ex["published"]["per_constituent_alpha"]
    assert choose_rank(20, parse_plan("1-of-2"), 10, target)[1] > target
    rank, alpha = choose_rank(20, parse_plan("1-of-3"), 10, target)
    assert (rank, round(alpha, 4)) == (1, 0.0055)


def test_nonparametric_achieved_rate_against_simulation():
    """1-of-2 on the 2nd highest of 15 values, 4 comparisons: the integral against 200,000 seeded
    simulated backgrounds and futures (any continuous distribution: uniform here)."""
    rng = np.random.default_rng(7)
    sims, n, r = 200_000, 15, 4
    limit = np.sort(rng.random((sims, n)), axis=1)[:, -2]
    fut = rng.random((sims, r, 2)) <= limit[:, None, None]
    passes = (fut[:, :, 0] | fut[:, :, 1]).all(axis=1)
    exact = achieved_confidence(n, 2, parse_plan("1-of-2"), r)
    assert passes.mean() == pytest.approx(exact, abs=4.5 * np.sqrt(exact * (1 - exact) / sims))


def test_maximum_of_n_one_comparison_is_n_over_n_plus_one():
    """Exchangeability: one future value is below the largest of n with probability n / (n + 1)
    (common practice; a check of the integral)."""
    for n in (5, 20, 60):
        assert achieved_confidence(n, 1, parse_plan("1-of-1"), 1) == pytest.approx(n / (n + 1), abs=1e-10)


# --------------------------------------------------------------------------- tolerance limits

def test_example_17_3_lognormal_tolerance_limit():
    """Example 17-3: 95 % coverage / 95 % confidence upper tolerance limit on log chrysene of the two
    background wells (n = 8): 90.9247 ppb."""
    ex = example("17_3_chrysene")
    x = np.concatenate(list(ex["background"].values()))
    y = np.log(x)
    assert y.mean() == pytest.approx(ex["published"]["log_mean"], abs=5e-7)
    assert y.std(ddof=1) == pytest.approx(ex["published"]["log_sd"], abs=5e-7)
    utl = parametric_utl(y.mean(), y.std(ddof=1), 8, 0.95, 0.95, log_scale=True)
    assert float(utl) == pytest.approx(ex["published"]["utl_95_95"], abs=5e-4)


def test_tolerance_factor_is_the_noncentral_t_quantile():
    """K = t'(conf; n - 1, z_cov sqrt(n)) / sqrt(n) against scipy.stats.nct directly, and the
    normal-theory limit's coverage checked by simulation (its confidence is 95 %)."""
    for n in (5, 10, 40):
        k = stats.nct.ppf(0.95, n - 1, stats.norm.ppf(0.9) * np.sqrt(n)) / np.sqrt(n)
        assert float(normal_tolerance_factor(n, 0.9, 0.95)) == pytest.approx(k, rel=1e-12)
    rng = np.random.default_rng(3)
    x = rng.standard_normal((100_000, 10))
    utl = x.mean(axis=1) + normal_tolerance_factor(10, 0.9, 0.95) * x.std(axis=1, ddof=1)
    covered = stats.norm.cdf(utl) >= 0.9
    assert covered.mean() == pytest.approx(0.95, abs=4.5 * np.sqrt(0.95 * 0.05 / 100_000))


def test_example_17_4_nonparametric_tolerance_limit():
    """Example 17-4: 24 background copper values with non-detects; the maximum 9.2 ppb covers 88 %
    at 95 % confidence (0.05^(1/24) = 0.8827)."""
    ex = example("17_4_copper")
    x, nd = cells(np.concatenate(list(ex["background"].values())))
    assert len(x) == ex["published"]["n"] and x.max() == ex["published"]["utl"]
    cov = float(nonparametric_coverage(24, 1, 0.95))
    assert round(100 * cov) == ex["published"]["coverage_percent"]
    assert cov == pytest.approx(0.05 ** (1 / 24), rel=1e-12)
    assert float(nonparametric_confidence(24, 1, cov)) == pytest.approx(0.95, abs=1e-12)


# --------------------------------------------------------------------------- confidence limits

def test_example_21_1_lower_limits_of_the_mean():
    """Example 21-1: lower 95 % limits of the mean aldicarb, 17.29, 21.96, 2.05 ppb vs 7 ppb."""
    ex = example("21_1_aldicarb")
    for well, vals in ex["wells"].items():
        x = np.array(vals)
        lcl = float(ci.mean_limit_normal(x.mean(), x.std(ddof=1), 4, 0.95, "lower"))
        assert lcl == pytest.approx(ex["published"]["lcl95_mean"][well], abs=0.006)
        assert (lcl > ex["published"]["mean_standard"]) == ex["published"]["exceeds_mean_standard"][well]


def test_example_21_4_limits_of_the_95th_percentile():
    """Example 21-4: 99 % lower and upper limits of the 95th percentile (non-central t)."""
    ex = example("21_1_aldicarb")
    for well, vals in ex["wells"].items():
        x = np.array(vals)
        lo = float(ci.percentile_limit_normal(x.mean(), x.std(ddof=1), 4, 0.95, 0.99, "lower"))
        hi = float(ci.percentile_limit_normal(x.mean(), x.std(ddof=1), 4, 0.95, 0.99, "upper"))
        assert lo == pytest.approx(ex["published"]["lcl99_p95"][well], abs=0.006)
        assert hi == pytest.approx(ex["published"]["ucl99_p95"][well], abs=0.006)
        assert (lo > 30) == ex["published"]["exceeds_percentile_standard"][well]


def test_example_21_2_and_21_3_lognormal_limits():
    """Example 21-2: upper 95 % limit of the geometric mean 2.846193 ppb; Example 21-3: Land's upper
    95 % limit of the arithmetic mean 18.86139 ppb (both against the 5 ppb MCL)."""
    ex = example("21_2_benzene")
    y = np.log(np.array(ex["values"]))
    assert y.mean() == pytest.approx(ex["published"]["log_mean"], abs=5e-7)
    gm = np.exp(float(ci.mean_limit_normal(y.mean(), y.std(ddof=1), 8, 0.95, "upper")))
    assert gm == pytest.approx(ex["published"]["ucl95_geometric_mean"], abs=5e-6)
    land = float(land_limit(y.mean(), y.std(ddof=1), 8, 0.95)[0])
    assert land == pytest.approx(ex["published"]["ucl95_mean_land"], abs=5e-5)
    assert gm < ex["published"]["mcl"] < land


def test_land_limits_cover_the_lognormal_mean():
    """Land's limits are exact: in 4,000 seeded lognormal samples (n = 10, sigma = 1) the upper
    90 % limit is above the true mean exp(1/2) in 90 % of them."""
    rng = np.random.default_rng(11)
    y = rng.standard_normal((4000, 10))
    upper = land_limit(y.mean(axis=1), y.std(axis=1, ddof=1), 10, 0.90)
    covered = upper > np.exp(0.5)
    assert covered.mean() == pytest.approx(0.90, abs=4.5 * np.sqrt(0.09 / 4000))


def test_example_21_5_median_and_geometric_mean():
    """Example 21-5: the lower 99 % limit of the median is the 4th smallest value, 3.65 ppb, at
    98.94 % confidence; the lower 99 % limit of the geometric mean is 4.129290 ppb."""
    ex = example("21_5_beryllium")
    x = np.array(ex["values"])
    (rank,), (conf,) = ci.order_statistic_rank([16], 0.5, 0.99, "lower")
    assert rank == ex["published"]["lcl_median_rank"]
    assert np.sort(x)[rank - 1] == ex["published"]["lcl_median"]
    assert conf == pytest.approx(ex["published"]["lcl_median_confidence"], abs=5e-5)
    y = np.log(x)
    assert np.exp(float(ci.mean_limit_normal(y.mean(), y.std(ddof=1), 16, 0.99, "lower"))) == pytest.approx(
        ex["published"]["lcl99_geometric_mean"], abs=5e-6)


def test_example_21_6_nonparametric_limits_of_the_95th_percentile():
    """Example 21-6: lower 95 % limit = 10th smallest (11 mg/L, 98 %) above the 10 mg/L standard;
    upper limit = the maximum 35.1 at only 46 % confidence."""
    ex = example("21_6_nitrate")
    x, nd = cells(ex["values"])
    pub = ex["published"]
    (lr,), (lc,) = ci.order_statistic_rank([12], 0.95, 0.95, "lower")
    (ur,), (uc,) = ci.order_statistic_rank([12], 0.95, 0.95, "upper")
    assert (lr, round(100 * lc), np.sort(x)[lr - 1]) == (pub["lcl_rank"], pub["lcl_confidence_percent"], pub["lcl"])
    assert (ur, round(100 * uc), np.sort(x)[ur - 1]) == (pub["ucl_rank"], pub["ucl_confidence_percent"], pub["ucl"])
    assert np.sort(x)[lr - 1] > pub["standard"]


def test_example_21_7_trend_band_errata_values():
    """Example 21-7 (errata 2010): upper 95 % limits of the TCE regression line at months 30 and 26,
    12.87 and 18.14 ppb, below the 20 ppb standard."""
    ex = example("21_7_tce")
    b = ci.trend_band(ex["months"], ex["values"], [30, 26], 0.95)
    assert b["slope"] == pytest.approx(ex["published"]["slope_per_month"], abs=5e-5)
    assert b["intercept"] == pytest.approx(ex["published"]["intercept"], abs=5e-5)
    assert b["upper"][0] == pytest.approx(ex["published"]["ucl95_month_30_errata"], abs=0.005)
    assert b["upper"][1] == pytest.approx(ex["published"]["ucl95_month_26_errata"], abs=0.005)


def test_example_22_1_alpha_for_power_and_lower_limits():
    """Example 22-1: the alpha giving 80 % power against a doubling (0.1633382 for n = 4, 0.0458989
    for 8, 0.01311214 for 12) and the lower limits of vinyl chloride at each well and window."""
    ex = example("22_1_vinyl_chloride")
    pub = ex["published"]
    for n, key in ((4, "alpha_for_power_n4"), (8, "alpha_for_power_n8"), (12, "alpha_for_power_n12")):
        assert ci.alpha_for_power(n, 1.0, 0.8) == pytest.approx(pub[key], rel=1e-5)
    for well, years, alpha, lcl in pub["lcl"]:
        x = np.concatenate([ex["wells"][well][y] for y in years])
        got = float(ci.mean_limit_normal(x.mean(), x.std(ddof=1), len(x), 1 - alpha, "lower"))
        assert got == pytest.approx(lcl, abs=5e-6), (well, years)


def test_kaplan_meier_standard_error_without_non_detects_is_s_over_root_n():
    """With no non-detects the Kaplan-Meier mean is the mean and its standard error s / sqrt(n)
    (the n/(n-1) convention; Helsel 2012, ch. 6)."""
    x = np.array([3.0, 1, 4, 1, 5, 9, 2, 6])
    m, se = ci.kaplan_meier_mean_se(x, np.zeros(8, bool))
    assert m == pytest.approx(x.mean()) and se == pytest.approx(x.std(ddof=1) / np.sqrt(8))


def test_kaplan_meier_mean_check_case():
    """KM mean of the 15-value check case of the censored-statistics notes: 1.789333 (Efron),
    matching tracescreen.statistics.censored (lifelines and statsmodels agree, notes)."""
    v = [0.5, 0.5, 0.5, 0.6, 0.8, 1.0, 1.0, 1.0, 1.2, 1.5, 1.9, 2.4, 3.1, 4.6, 7.5]
    f = [1, 1, 1, 0, 0, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0]
    m, se = ci.kaplan_meier_mean_se(v, f)
    assert m == pytest.approx(1.789333, abs=5e-7)
    assert 0 < se < np.std(v, ddof=1) / np.sqrt(15) * 1.5


# --------------------------------------------------------------------------- outliers and background tests

def test_example_12_4_rosner():
    """Example 12-4: Rosner's test for 2 outliers in 25 naphthalene values: R = 3.930957, 4.160223
    against lambda = 2.821681, 2.801551; both 35.45 and 23.23 are outliers."""
    ex = example("12_4_naphthalene")
    x = np.concatenate(list(ex["wells"].values()))
    r = rosner_test(x, k=2)
    assert r["statistics"] == pytest.approx(ex["published"]["statistics"], abs=5e-7)
    assert r["critical"] == pytest.approx(ex["published"]["lambda"], abs=5e-7)
    assert r["outliers"] == ex["published"]["outliers"]


def test_dixon_critical_values_against_simulation():
    """The Dixon table (from memory of Dixon 1953) against the 95th and 99th percentiles of Dixon's
    ratio in 200,000 seeded normal samples per n (simulation error about 0.002; 0.006 allowed)."""
    rng = np.random.default_rng(1953)
    for n in (3, 5, 7, 8, 10, 11, 13, 14, 20, 25):
        x = np.sort(rng.standard_normal((200_000, n)), axis=1)
        top, low = (2, 1) if n <= 7 else (2, 2) if n <= 10 else (3, 2) if n <= 13 else (3, 3)
        q = (x[:, -1] - x[:, -top]) / (x[:, -1] - x[:, low - 1])
        assert dixon_ratio(x[0]) == pytest.approx(q[0])
        assert np.quantile(q, 0.95) == pytest.approx(DIXON_CRITICAL[0.05][n], abs=0.006), n
        assert np.quantile(q, 0.99) == pytest.approx(DIXON_CRITICAL[0.01][n], abs=0.006), n


def test_background_wells_spatial_tests_and_pooling():
    """Example 19-2: one-way ANOVA of 10 wells F = 7.5467 (p 1.099e-05), Levene F = 1.0673
    (p 0.4139585), pooled SD 10.56782 on 30 df; Example 17-2: Kruskal-Wallis chi2 = 11.86932
    (p 0.007844498) with non-detects as ties; Example 17-1: ANOVA F = 4.3852 (p 0.01114)."""
    ex = example("19_2_chloride")
    groups = [np.array(v) for v in ex["wells"].values()]
    wells = np.repeat(list(ex["wells"]), 4)
    x = np.concatenate(groups)
    a = spatial_variability(x, np.zeros(40, bool), wells, log_scale=False)
    assert a["test"] == "anova"
    assert a["statistic"] == pytest.approx(ex["published"]["anova_f"], abs=5e-5)
    assert a["p_value"] == pytest.approx(ex["published"]["anova_p"], rel=1e-3)
    p = pooled_sd(groups, 0.05)
    assert p["levene_p"] == pytest.approx(ex["published"]["levene_p"], abs=5e-8)
    assert p["pooled"] and p["df"] == 30 and p["sd"] == pytest.approx(ex["published"]["pooled_sd"], abs=5e-6)
    t = example("17_2_toluene")
    vals, nds, labels = [], [], []
    for well, v in t["toluene"].items():
        xx, nd = cells(v)
        vals.append(xx)
        nds.append(nd)
        labels += [well] * len(xx)
    k = spatial_variability(np.concatenate(vals), np.concatenate(nds), np.array(labels), log_scale=False)
    assert k["test"] == "kruskal_wallis"
    assert k["statistic"] == pytest.approx(t["published"]["kruskal_wallis_chi2"], abs=5e-6)
    assert k["p_value"] == pytest.approx(t["published"]["kruskal_wallis_p"], abs=5e-9)
    ll = t["log_lead"]
    f = spatial_variability(np.concatenate([np.array(v) for v in ll.values()]), np.zeros(24, bool),
                            np.concatenate([[w] * len(v) for w, v in ll.items()]), log_scale=False)
    assert f["statistic"] == pytest.approx(t["published"]["anova_f"], abs=5e-5)
    assert f["p_value"] == pytest.approx(t["published"]["anova_p"], abs=5e-6)


def test_shapiro_wilk_of_examples():
    """Shapiro-Wilk W and p as printed for Examples 19-1 (raw and log), 18-1 and 20-1."""
    s = example("19_1_sulfate")
    x = np.array([r[2] for r in s["rows"]])
    w, p = stats.shapiro(x)
    assert (w, p) == pytest.approx((s["published"]["shapiro_w"], s["published"]["shapiro_p"]), rel=1e-5)
    w, p = stats.shapiro(np.log(x))
    assert (w, p) == pytest.approx((s["published"]["shapiro_log_w"], s["published"]["shapiro_log_p"]), rel=1e-5)
    a = example("18_1_arsenic")
    assert stats.shapiro(a["background"]).pvalue == pytest.approx(a["published"]["shapiro_p"], rel=1e-5)
    ni = example("20_1_nickel")
    assert stats.shapiro(ni["baseline"]).pvalue == pytest.approx(ni["published"]["shapiro_p"], rel=1e-5)


# --------------------------------------------------------------------------- control charts

def test_example_20_1_shewhart_cusum():
    """Example 20-1: nickel baseline mean 25.1375, SD 11.51818; with k = 1, h = 5, SCL = 4.5 the
    8th compliance value (81.8, Z = 4.919) is out of control on the Shewhart limit while the CUSUM
    stays below h (hand calculation from the printed baseline statistics)."""
    ex = example("20_1_nickel")
    b = np.array(ex["baseline"])
    assert b.mean() == pytest.approx(ex["published"]["baseline_mean"], abs=5e-5)
    assert b.std(ddof=1) == pytest.approx(ex["published"]["baseline_sd"], abs=5e-6)
    c = np.array(ex["compliance"])[None, :]
    res = shewhart_cusum(c, np.zeros(c.shape, bool), np.ones(c.shape, bool), np.array([b.mean()]),
                         np.array([b.std(ddof=1)]))
    statuses = [CHART_STATUSES[s] for s in res["status"][0]]
    assert statuses[:7] == ["in_control"] * 7 and statuses[7] == "resample_required"
    assert res["z"][0, 7] == pytest.approx(ex["hand_calculation"]["last_z"], abs=5e-4)
    assert res["cusum"][0, 6] == ex["hand_calculation"]["cusum_before_last"]
    assert res["cusum"][0, 7] < 5


def test_control_chart_retest_confirms_or_clears():
    """A resample out of control confirms; one in control clears, and is charted in place of the
    point it retests (our reading of ch. 20)."""
    vals = np.array([[0.0, 5.0, 5.2, 0.0], [0.0, 5.0, 0.5, 0.0]])
    res = shewhart_cusum(vals, np.zeros(vals.shape, bool), np.ones(vals.shape, bool), np.zeros(2), np.ones(2))
    names = [[CHART_STATUSES[s] for s in row] for row in res["status"]]
    assert names[0][:3] == ["in_control", "resample_required", "confirmed_out_of_control"]
    assert names[1][:3] == ["in_control", "resample_required", "not_confirmed"]
    assert res["cusum"][1, 2] == 0.0   # the resample (Z = 0.5) replaces the point: S = max(0, 0.5 - 1 + 0)
