"""Censored-data statistics checked against statsmodels, scipy, closed forms and the check case in tests/data."""

import csv
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from statsmodels.duration.survfunc import SurvfuncRight
from statsmodels.imputation.ros import impute_ros

from tracescreen.statistics import bootstrap, censored
from tracescreen.statistics.lognormal import lognormal_mle
from tracescreen.statistics.ros import ros

# Check case (15 values, detection limits 0.5 and 1.0) and its KM, ROS and MLE statistics computed
# with lifelines, statsmodels and by hand: tests/data/censored_check_case_15_values*.csv (origin in
# tests/data/README.md).
DATA = Path(__file__).parent / "data"
_CASE = np.genfromtxt(DATA / "censored_check_case_15_values.csv", delimiter=",", names=True)
CHECK_X = _CASE["value"].astype(float)
CHECK_ND = _CASE["nondetect"].astype(bool)
EXPECTED = {r["statistic"]: float(r["value"])
            for r in csv.DictReader((DATA / "censored_check_case_15_values_expected.csv").open(encoding="utf-8"))}


def km_reference(x, nd, probs):
    """Kaplan-Meier mean (Efron), sd and percentiles from statsmodels' SurvfuncRight on flipped data."""
    big = x.max() + 1.0
    sf = SurvfuncRight(big - x, (~nd).astype(int))
    times, surv = sf.surv_times, sf.surv_prob
    t_end = big - x.min()
    # masses at event times (flipped back to x), remaining survival mass at the smallest value
    mass = -np.diff(np.concatenate(([1.0], surv)))
    support = np.append(big - times, x.min())
    mass = np.append(mass, surv[-1])
    edges = np.append(times, t_end)
    restricted = times[0] + np.sum(surv * np.diff(edges))  # area under S on [0, t_end]
    mean = big - restricted
    n = x.size
    sd = np.sqrt(np.sum(mass * (support - mean) ** 2) * n / (n - 1))
    q = np.array([big - sf.quantile(1 - p) for p in probs])
    return mean, sd, q


def test_km_check_case():
    """KM mean (Efron), median and 75th percentile of the check case (tests/data: lifelines/statsmodels/hand)."""
    r = censored.kaplan_meier(CHECK_X, CHECK_ND, probs=(0.5, 0.75))
    assert_allclose(r["mean"], EXPECTED["kaplan_meier_mean_efron"], atol=5e-7)
    assert_allclose(r["quantiles"], [EXPECTED["kaplan_meier_median"], EXPECTED["kaplan_meier_p75"]], rtol=1e-12)


@pytest.mark.parametrize("seed,dls", [(1, [1.0]), (2, [0.5, 1.0, 2.0]), (3, [0.2, 0.3, 0.7, 1.5])])
def test_km_matches_statsmodels(seed, dls):
    """KM mean, sd and percentiles equal statsmodels SurvfuncRight on flipped data (one and several DLs), rtol 1e-10."""
    # n = 61: no F value equals a probability exactly (k/61), where rounding would decide the tie
    rng = np.random.default_rng(seed)
    true = rng.lognormal(0.0, 1.0, 61)
    dl = rng.choice(dls, 61)
    nd = true < dl
    x = np.where(nd, dl, np.round(true, 3))
    probs = (0.25, 0.5, 0.75, 0.9, 0.95)
    r = censored.kaplan_meier(x, nd, probs)
    mean, sd, q = km_reference(x, nd, probs)
    assert_allclose(r["mean"], mean, rtol=1e-10)
    assert_allclose(r["sd"], sd, rtol=1e-10)
    assert_allclose(r["quantiles"], q, rtol=1e-10)


def test_km_percentile_at_exact_step_is_the_lower_value():
    """Uncensored n = 40: F(x_(20)) = 20/40 exactly, so the KM median is x_(20) (smallest x with F >= 0.5, Helsel 2012 ch. 6)."""
    x = np.arange(1.0, 41.0) * 1.1
    nd = np.zeros(40, bool)
    nd[:3] = True  # censoring in the lower tail keeps the upper steps at k/40
    r = censored.kaplan_meier(x, nd, probs=(0.5, 0.9, 0.95))
    assert_allclose(r["quantiles"], [x[19], x[35], x[37]], rtol=1e-15)


def test_km_percentile_below_smallest_detect_is_nan():
    """A percentile inside the mass below the smallest detect is unknown ("<DL"); statsmodels also gives none (NaN)."""
    x = np.array([1.0, 1.0, 1.0, 1.0, 2.0, 3.0])
    nd = np.array([1, 1, 1, 1, 0, 0], bool)
    r = censored.kaplan_meier(x, nd, probs=(0.5, 0.9))
    _, _, q = km_reference(x, nd, (0.5, 0.9))
    assert np.isnan(r["quantiles"][0]) and np.isnan(q[0])
    assert r["quantiles"][1] == pytest.approx(q[1], rel=1e-12)


def test_km_grouped_equals_single_series():
    """The vectorised grouped KM gives the single-series results for every group (identical to 1e-13)."""
    rng = np.random.default_rng(7)
    sizes = rng.integers(3, 70, 40)
    codes = np.repeat(np.arange(40), sizes)
    x = rng.lognormal(0, 1, codes.size).round(2) + 0.01
    nd = rng.random(codes.size) < 0.3
    table = censored.kaplan_meier_grouped(x, nd, codes, 41)
    for g in range(40):
        one = censored.kaplan_meier(x[codes == g], nd[codes == g])
        assert_allclose(table.loc[g, ["mean", "sd", "q50", "q90", "q95"]].to_numpy(float),
                        [one["mean"], one["sd"], *one["quantiles"]], rtol=1e-13)
    assert table.loc[40].isna().all()


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(0.01, 1000, allow_nan=False), min_size=2, max_size=50))
def test_km_without_nondetects_is_sample_statistics(xs):
    """Censoring nothing changes nothing: KM mean and sd equal numpy's mean and sd (ddof=1), property test."""
    x = np.array(xs)
    r = censored.kaplan_meier(x, np.zeros(x.size, bool))
    assert_allclose(r["mean"], x.mean(), rtol=1e-9)
    assert_allclose(r["sd"], x.std(ddof=1), rtol=1e-7, atol=1e-9 * x.max())


def test_ros_check_case():
    """ROS mean and sd of the check case (tests/data: statsmodels impute_ros)."""
    imputed = ros(CHECK_X, CHECK_ND)
    assert_allclose([imputed.mean(), imputed.std(ddof=1)], [EXPECTED["ros_mean"], EXPECTED["ros_sd"]], atol=5e-7)


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_ros_matches_statsmodels(seed):
    """ROS imputed set equals statsmodels.imputation.ros.impute_ros (several DLs, below 80 % censored), rtol 1e-12."""
    rng = np.random.default_rng(seed)
    true = rng.lognormal(0.5, 0.8, 50)
    dl = rng.choice([0.8, 1.2, 2.0], 50)
    nd = true < dl
    x = np.where(nd, dl, true)
    assert x[nd].max() <= x[~nd].max()  # statsmodels drops NDs above the largest detect
    ours = np.sort(ros(x, nd))
    ref = np.sort(impute_ros(x, nd))
    assert_allclose(ours, ref, rtol=1e-12)


def test_ros_too_few_detects_is_nan():
    """With one detect there is no regression line: ROS returns NaN (no silent substitution, Helsel 2012 ch. 6)."""
    assert np.isnan(ros([1.0, 1.0, 3.0], [True, True, False])).all()


def test_mle_check_case():
    """Lognormal MLE mu, sigma and mean of the check case (tests/data: scipy optimiser on the likelihood)."""
    r = lognormal_mle(CHECK_X, CHECK_ND)
    assert_allclose([r["mu"], r["sigma"], r["mean"]], [EXPECTED["lognormal_mle_mu"], EXPECTED["lognormal_mle_sigma"], EXPECTED["lognormal_mle_mean"]],
                    atol=2e-6)


def test_mle_uncensored_is_closed_form():
    """Without censoring the lognormal MLE is the mean and the ddof=0 sd of ln x (closed form, Cohen 1959)."""
    x = np.random.default_rng(5).lognormal(1.0, 0.6, 40)
    r = lognormal_mle(x, np.zeros(40, bool))
    assert_allclose(r["mu"], np.log(x).mean(), atol=1e-8)
    assert_allclose(r["sigma"], np.log(x).std(ddof=0), atol=1e-8)


def test_substitution_is_labelled_and_uses_fraction_of_dl():
    """DL/2 substitution replaces each non-detect by half its DL and says so in `method` (Helsel 2006)."""
    x = np.array([2.0, 4.0, 5.0, 7.0])
    nd = np.array([True, True, False, False])
    out = censored.censored_statistics_grouped(x, nd, np.zeros(4, int), 1, method="substitution_half_dl")
    assert out.loc[0, "method"] == "substitution_half_dl"
    assert out.loc[0, "mean"] == pytest.approx(np.mean([1.0, 2.0, 5.0, 7.0]))


def test_grouped_methods_without_nondetects_use_sample_statistics():
    """A series with no non-detects gets the plain sample statistics whatever the method (README.md#statistics-summarycsv-exceedancescsv-trendscsv)."""
    x = np.array([1.0, 2.0, 4.0])
    for method in censored.METHODS:
        out = censored.censored_statistics_grouped(x, np.zeros(3, bool), np.zeros(3, int), 1, method=method)
        assert out.loc[0, "method"] == "sample_statistics"
        assert out.loc[0, "mean"] == pytest.approx(7 / 3)
        assert out.loc[0, "q50"] == pytest.approx(2.0)


def test_grouped_ros_and_mle_match_single_series():
    """Grouped ROS and MLE statistics equal the single-series functions."""
    x = np.concatenate([CHECK_X, CHECK_X * 2])
    nd = np.concatenate([CHECK_ND, CHECK_ND])
    codes = np.repeat([0, 1], 15)
    ros = censored.censored_statistics_grouped(x, nd, codes, 2, method="ros")
    assert ros.loc[0, "mean"] == pytest.approx(1.7001522567, rel=1e-9)
    mle = censored.censored_statistics_grouped(x, nd, codes, 2, method="mle_lognormal")
    assert mle.loc[1, "mean"] == pytest.approx(2 * EXPECTED["lognormal_mle_mean"], rel=1e-6)


def test_bootstrap_ucl_is_seeded_and_above_mean():
    """The bootstrap UCL on the KM mean is reproducible with a seed and lies above the KM mean (Efron & Tibshirani 1993)."""
    codes = np.zeros(15, int)
    a = bootstrap.bootstrap_ucl_km_grouped(CHECK_X, CHECK_ND, codes, 1, n_boot=2000, seed=3)
    b = bootstrap.bootstrap_ucl_km_grouped(CHECK_X, CHECK_ND, codes, 1, n_boot=2000, seed=3)
    assert a[0] == b[0]
    assert EXPECTED["kaplan_meier_mean_efron"] < a[0] < 4.0


def test_bootstrap_ucl_without_censoring_near_t_interval():
    """Uncensored: the bootstrap 95 % UCL is close to the Student-t UCL mean + t(0.95) s/sqrt(n) (within 10 %)."""
    x = np.random.default_rng(9).normal(10, 2, 60)
    ucl = bootstrap.bootstrap_ucl_km_grouped(x, np.zeros(60, bool), np.zeros(60, int), 1, n_boot=4000)
    from scipy import stats
    t_ucl = x.mean() + stats.t.ppf(0.95, 59) * x.std(ddof=1) / np.sqrt(60)
    assert abs((ucl[0] - x.mean()) / (t_ucl - x.mean()) - 1) < 0.1


def test_ros_edge_layouts_match_statsmodels():
    """ROS equals impute_ros with a detect below the lowest DL and detects equal to a DL (rtol 1e-12)."""
    x = np.array([0.2, 0.5, 0.5, 0.5, 1.0, 1.0, 0.7, 1.0, 1.3, 2.2, 3.5, 0.9, 5.0, 2.0, 2.0])
    nd = np.array([0, 1, 1, 0, 1, 0, 0, 1, 0, 0, 0, 0, 0, 1, 0], bool)
    assert_allclose(np.sort(ros(x, nd)), np.sort(impute_ros(x, nd)), rtol=1e-12)


def test_grouped_ros_equals_single_series():
    """Vectorised grouped ROS gives each series' single-series ROS statistics; < 2 detects gives NaN."""
    rng = np.random.default_rng(21)
    sizes = rng.integers(4, 60, 30)
    codes = np.repeat(np.arange(30), sizes)
    true = rng.lognormal(0, 1, codes.size)
    dl = rng.choice([0.5, 0.8, 1.5], codes.size)
    nd = true < dl
    x = np.where(nd, dl, true)
    nd[codes == 0] = True
    x[codes == 0] = 1.0
    table = censored.censored_statistics_grouped(x, nd, codes, 30, method="ros")
    assert table.loc[0, ["mean", "sd", "q50"]].isna().all()
    for g in range(1, 30):
        one = ros(x[codes == g], nd[codes == g])
        assert table.loc[g, "mean"] == pytest.approx(one.mean(), rel=1e-12, nan_ok=True)
        assert table.loc[g, "q90"] == pytest.approx(np.percentile(one, 90), rel=1e-12, nan_ok=True)


def test_grouped_mle_matches_scipy_fit_per_series():
    """Vectorised Newton MLE equals the scipy.optimize (BFGS) fit of each series (rtol 1e-7) and the check case."""
    rng = np.random.default_rng(33)
    sizes = rng.integers(6, 80, 40)
    codes = np.repeat(np.arange(40), sizes)
    true = rng.lognormal(rng.normal(0, 1, 40)[codes], rng.uniform(0.3, 1.5, 40)[codes])
    dl = rng.choice([0.3, 0.6, 1.0], codes.size)
    nd = true < dl
    x = np.where(nd, dl, true)
    x = np.concatenate([x, CHECK_X])
    nd = np.concatenate([nd, CHECK_ND])
    codes = np.concatenate([codes, np.full(15, 40)])
    table = censored.censored_statistics_grouped(x, nd, codes, 41, method="mle_lognormal")
    for g in range(41):
        if not nd[codes == g].any():
            continue
        one = lognormal_mle(x[codes == g], nd[codes == g])
        assert table.loc[g, "mean"] == pytest.approx(one["mean"], rel=1e-7, nan_ok=True)
        assert table.loc[g, "q90"] == pytest.approx(one["quantiles"][1], rel=1e-7, nan_ok=True)
    assert table.loc[40, "mean"] == pytest.approx(EXPECTED["lognormal_mle_mean"], abs=2e-6)  # check case


def test_bootstrap_resample_means_equal_kaplan_meier_of_each_resample():
    """KM means computed from resample counts equal kaplan_meier() of each resample taken explicitly (rtol 1e-12);
    kaplan_meier itself is checked against statsmodels SurvfuncRight above. Ties, several DLs, padding included."""
    rng = np.random.default_rng(11)
    sizes = [1, 2, 7, 15, 30]
    m = max(sizes)
    x = np.zeros((len(sizes), m))
    nd = np.zeros((len(sizes), m), bool)
    valid = np.zeros((len(sizes), m), bool)
    for i, n in enumerate(sizes):
        x[i, :n] = np.round(rng.lognormal(0, 1, n), 1)  # rounded: tied values
        nd[i, :n] = rng.random(n) < 0.35
        x[i, :n][nd[i, :n]] = rng.choice([0.5, 1.0], nd[i, :n].sum())  # two detection limits
        valid[i, :n] = True
    n_boot = 40
    pick = (rng.random((len(sizes), n_boot, m)) * np.array(sizes)[:, None, None]).astype(np.int64)
    got = bootstrap.km_means_of_resamples(x, nd, valid, pick)
    for i, n in enumerate(sizes):
        for b in range(n_boot):
            take = pick[i, b, :n]
            expected = censored.kaplan_meier(x[i, take], nd[i, take])["mean"]
            assert got[i, b] == pytest.approx(expected, rel=1e-12, nan_ok=True)
