"""The analytic upper confidence limit of the mean: t on the Kaplan-Meier mean and its standard error.

Sources: Student's t table (t(0.95; 15) = 1.753, any statistics handbook); without non-detects the
Kaplan-Meier mean is the sample mean and its standard error s / sqrt(n) (Helsel 2012, ch. 6); the
bootstrap variance of a Kaplan-Meier functional approaches the Greenwood-type variance (Efron, B.
(1981), Censored data and the bootstrap, JASA 76: 312-319), checked against the package's own
bootstrap on a large censored sample; the per-series formula of the background statistics
(statistics.background.confidence.kaplan_meier_mean_se, Klein and Moeschberger 2003, sec. 4.5) is
the same formula written per series.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tracescreen.statistics import bootstrap, censored
from tracescreen.statistics.background.confidence import kaplan_meier_mean_se
from tracescreen.statistics.summary import summarise, ucl_km_t

CHECK_X = [0.5, 0.5, 0.5, 0.6, 0.8, 1.0, 1.0, 1.0, 1.2, 1.5, 1.9, 2.4, 3.1, 4.6, 7.5]
CHECK_ND = [1, 1, 1, 0, 0, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0]


def test_t_quantile_from_a_t_table():
    """mean + t(0.95; 15) se with t = 1.753 (Student's t table, 15 degrees of freedom)."""
    assert ucl_km_t(0.0, 1.0, 16)[0] == pytest.approx(1.753, abs=5e-4)
    assert np.isnan(ucl_km_t(1.0, 1.0, 1)[0])


def test_t_quantiles_equal_scipy_stats():
    """The t quantile of every sample size 2 .. 2000 equals scipy.stats.t.ppf (reference library), to the bit."""
    from scipy import stats

    n = np.arange(2, 2001)
    assert np.array_equal(ucl_km_t(np.zeros(n.size), np.ones(n.size), n), stats.t.ppf(0.95, n - 1))


def test_standard_error_without_non_detects_is_s_over_root_n():
    """No non-detects: KM mean = sample mean, se = s / sqrt(n) (Helsel 2012, ch. 6)."""
    x = np.array([3.0, 1, 4, 1, 5, 9, 2, 6, 5, 3])
    km = censored.kaplan_meier_grouped(x, np.zeros(10, bool), np.zeros(10, int), 1, probs=())
    assert km["mean"][0] == pytest.approx(x.mean(), rel=1e-12)
    assert km["se"][0] == pytest.approx(x.std(ddof=1) / np.sqrt(10), rel=1e-12)


def test_grouped_standard_error_equals_the_per_series_formula():
    """The vectorised standard error equals the per-series function of the background statistics on the
    15-value check case and on random censored series of different lengths (same published formula)."""
    m, se = kaplan_meier_mean_se(CHECK_X, CHECK_ND)
    km = censored.kaplan_meier_grouped(CHECK_X, CHECK_ND, np.zeros(15, int), 1, probs=())
    assert km["mean"][0] == pytest.approx(1.789333, abs=5e-7)  # KM mean of the check case (censored-statistics notes)
    assert km["se"][0] == pytest.approx(se, rel=1e-12)
    rng = np.random.default_rng(4)
    sizes = [5, 12, 40, 3, 77]
    x = np.round(rng.lognormal(0, 1, sum(sizes)), 2)
    dl = rng.choice([0.5, 1.0], sum(sizes))
    nd = x < dl
    v = np.where(nd, dl, x)
    codes = np.repeat(np.arange(len(sizes)), sizes)
    km = censored.kaplan_meier_grouped(v, nd, codes, len(sizes), probs=())
    for g in range(len(sizes)):
        m, se = kaplan_meier_mean_se(v[codes == g], nd[codes == g])
        if np.isnan(se):
            assert np.isnan(km["se"][g])
        else:
            assert km["mean"][g] == pytest.approx(m, rel=1e-12) and km["se"][g] == pytest.approx(se, rel=1e-10)


def test_standard_error_agrees_with_the_bootstrap_on_a_large_censored_sample():
    """n = 400 lognormal values, about 30 % below two detection limits: the bootstrap standard deviation
    of the KM mean (B = 3000) is within 8 % of the analytic standard error (Efron 1981)."""
    rng = np.random.default_rng(11)
    x = rng.lognormal(0.3, 0.8, 400)
    dl = rng.choice([0.8, 1.2], 400)
    nd = x < dl
    v = np.where(nd, dl, x)
    km = censored.kaplan_meier_grouped(v, nd, np.zeros(400, int), 1, probs=())
    valid = np.ones((1, 400), bool)
    pick = (rng.random((1, 3000, 400)) * 400).astype(np.int64)
    means = bootstrap.km_means_of_resamples(v[None, :], nd[None, :], valid, pick)[0]
    assert means.std(ddof=1) == pytest.approx(km["se"][0], rel=0.08)


def test_summary_default_is_the_t_limit_and_bootstrap_on_request():
    """ucl95_mean by default = KM mean + t(0.95; n-1) se; --ucl bootstrap gives the percentile bootstrap,
    close to it on a large sample (Efron 1981)."""
    rng = np.random.default_rng(2)
    n = 200
    x = rng.lognormal(0.0, 0.5, n)
    nd = x < 0.7
    data = pd.DataFrame({
        "site_id": "A", "analyte": "lead", "fraction": "total", "sample_type": "sample",
        "sampled_at": pd.date_range("2020-01-01", periods=n, freq="D"),
        "value_ug_L": np.where(nd, np.nan, x), "detected": ~nd, "detection_limit_ug_L": np.where(nd, 0.7, 0.1),
    })
    t = summarise(data).iloc[0]
    km = censored.kaplan_meier_grouped(np.where(nd, 0.7, x), nd, np.zeros(n, int), 1, probs=())
    assert t["ucl95_mean"] == pytest.approx(km["mean"][0] + 1.6525 * km["se"][0], rel=1e-4)  # t(0.95; 199) = 1.6525
    assert "t on the Kaplan-Meier mean" in t["ucl_method"]
    b = summarise(data, ucl="bootstrap", n_boot=2000).iloc[0]
    assert "bootstrap" in b["ucl_method"] and b["ucl95_mean"] == pytest.approx(t["ucl95_mean"], rel=0.03)


def test_long_series_resamples_in_blocks_give_the_same_limit(monkeypatch):
    """A long series draws its bootstrap resamples in blocks (memory of the order of RESAMPLE_CELLS, not
    B x n): the generator gives the same numbers in rows of any block size, so the limit is identical
    (the property of numpy's Generator.random filling row by row; common practice)."""
    rng = np.random.default_rng(8)
    x = np.round(rng.lognormal(0, 1, 2500), 2)
    nd = x < 0.5
    x = np.where(nd, 0.5, x)
    whole = bootstrap.bootstrap_ucl_km_grouped(x, nd, np.zeros(x.size, np.int64), 1, n_boot=200)
    monkeypatch.setattr(bootstrap, "RESAMPLE_CELLS", 2500 * 7)  # blocks of 7 resamples, the last one shorter
    blocked = bootstrap.bootstrap_ucl_km_grouped(x, nd, np.zeros(x.size, np.int64), 1, n_boot=200)
    assert blocked[0] == whole[0]
