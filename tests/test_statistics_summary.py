"""Summary table and exceedance rates checked against scipy, numpy and the check case in tests/data."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from tracescreen.statistics import summary

# Check case (KM mean 1.789333, median 0.8; tests/data/README.md)
_CASE = np.genfromtxt(Path(__file__).parent / "data" / "censored_check_case_15_values.csv", delimiter=",", names=True)
CHECK_X = _CASE["value"].astype(float).tolist()
CHECK_ND = _CASE["nondetect"].astype(int).tolist()


def results(site, values, nondetect, sample_type="sample", analyte="arsenic"):
    """Accepted-results rows (DEVELOPERS.md data model) for one series."""
    n = len(values)
    nd = np.asarray(nondetect, bool)
    v = np.asarray(values, float)
    return pd.DataFrame({
        "site_id": site, "analyte": analyte, "fraction": "total",
        "sampled_at": pd.date_range("2020-01-01", periods=n, freq="QS"),
        "value_ug_L": np.where(nd, np.nan, v), "detected": ~nd,
        "detection_limit_ug_L": np.where(nd, v, 0.1), "sample_type": sample_type,
    })


def test_clopper_pearson_matches_scipy_binomtest():
    """Exact binomial 95 % interval equals scipy.stats.binomtest(k, n).proportion_ci(method="exact") (atol 1e-11: scipy root-finds)."""
    for n in (1, 5, 12, 40, 200):
        k = np.arange(n + 1)
        low, high = summary.clopper_pearson(k, np.full(k.size, n))
        for ki in k:
            ref = stats.binomtest(int(ki), n).proportion_ci(0.95, method="exact")
            assert_allclose([low[ki], high[ki]], [ref.low, ref.high], rtol=0, atol=1e-11)


def test_summary_km_on_check_case():
    """KM mean 1.789333 and median 0.8 of the check case (tests/data) appear in the summary (method kaplan_meier)."""
    s = summary.summarise(results("A", CHECK_X, CHECK_ND)).iloc[0]
    assert s["method"] == "kaplan_meier"
    assert s["mean"] == pytest.approx(1.789333, abs=5e-7)
    assert s["median"] == pytest.approx(0.8)
    assert (s["n"], s["n_detected"], s["percent_nondetect"]) == (15, 9, 40.0)
    assert (s["min_detected"], s["max_detected"], s["max_detection_limit"]) == (0.6, 7.5, 1.0)
    assert s["mean"] < s["ucl95_mean"]


def test_summary_without_nondetects_is_numpy():
    """No non-detects: mean, sd (ddof=1), median, p90, p95 are numpy's (linear percentiles)."""
    x = np.random.default_rng(4).lognormal(0, 1, 30)
    s = summary.summarise(results("A", x, np.zeros(30))).iloc[0]
    assert s["method"] == "sample_statistics"
    assert_allclose([s["mean"], s["sd"], s["median"], s["p90"], s["p95"]],
                    [x.mean(), x.std(ddof=1), *np.percentile(x, [50, 90, 95])], rtol=1e-12)


def test_qc_samples_are_left_out():
    """Field duplicates and blanks do not enter the site statistics (the parent result represents the pair)."""
    base = results("A", CHECK_X, CHECK_ND)
    qc = pd.concat([results("A", [99.0, 50.0], [0, 0], "field_duplicate"),
                    results("A", [0.01], [0], "field_blank")])
    a = summary.summarise(base)
    b = summary.summarise(pd.concat([base, qc]))
    pd.testing.assert_frame_equal(a, b)


def test_rules_of_thumb():
    """> 80 % non-detects: no mean or percentiles; < 3 detects: no mean; 50-80 %: no percentiles below max DL (Helsel 2012)."""
    many = results("A", [1.0] * 18 + [2.0, 3.0], [1] * 18 + [0, 0])  # 90 % ND
    few = results("B", [5.0, 6.0, 1.0, 1.0], [0, 0, 1, 1])  # 2 detects, 50 % ND
    mid = results("C", [1.0] * 6 + [0.5, 2.0, 3.0, 4.0], [1] * 6 + [0] * 4)  # 60 % ND, max DL 1
    s = summary.summarise(pd.concat([many, few, mid])).set_index("site_id")
    assert s.loc["A", ["mean", "sd", "median", "p90", "p95", "ucl95_mean"]].isna().all()
    assert "more than 80 %" in s.loc["A", "note"]
    assert s.loc["A", "max_detected"] == 3.0
    assert np.isnan(s.loc["B", "mean"]) and "fewer than 3 detected" in s.loc["B", "note"]
    assert np.isnan(s.loc["C", "median"])  # KM median lies below the highest DL (1 µg/L)
    assert s.loc["C", "p95"] == 4.0
    assert "50-80 %" in s.loc["C", "note"] and not np.isnan(s.loc["C", "mean"])


def test_substitution_only_on_request_and_labelled():
    """DL/2 substitution is used only when asked and named in `method` and `note` (Helsel 2006)."""
    data = results("A", CHECK_X, CHECK_ND)
    assert summary.summarise(data).loc[0, "method"] == "kaplan_meier"
    s = summary.summarise(data, method="substitution_half_dl").iloc[0]
    assert s["method"] == "substitution_half_dl" and "substitution" in s["note"]
    expected = np.where(np.array(CHECK_ND, bool), 0.5 * np.array(CHECK_X), CHECK_X).mean()
    assert s["mean"] == pytest.approx(expected)
    with pytest.raises(ValueError, match="unknown method"):
        summary.summarise(data, method="half")


def test_exceedance_rates_counts_and_interval():
    """Per limit: n, n_above, undecided non-detects and the Clopper-Pearson CI of scipy.stats.binomtest."""
    status = ["exceeds"] * 3 + ["meets"] * 14 + ["nondetect_inconclusive"] * 2 + ["nondetect_meets"]
    screened = pd.DataFrame({
        "site_id": "A", "analyte": "arsenic", "fraction": "total", "sample_type": "sample",
        "limit_table": "who_2022", "use": "drinking", "duration": "", "basis": "total",
        "limit_ug_L": 10.0, "status": status,
    })
    qc = screened.iloc[:2].assign(sample_type="field_duplicate", status="qc_sample")
    r = summary.exceedance_rates(pd.concat([screened, qc])).iloc[0]
    assert (r["n"], r["n_above"], r["n_undecided"]) == (20, 3, 2)
    ref = stats.binomtest(3, 20).proportion_ci(0.95, method="exact")
    assert_allclose([r["proportion_above"], r["ci95_low"], r["ci95_high"]], [0.15, ref.low, ref.high], rtol=0, atol=1e-11)
    assert "undecided" in r["note"]


def test_efron_note_only_when_the_smallest_value_is_a_nondetect():
    """The Efron caveat appears only when a DL is at or below the smallest detect (else KM puts no mass below it, Helsel 2012 ch. 6)."""
    low_dl = results("A", CHECK_X, CHECK_ND)  # DL 0.5 below the smallest detect 0.6
    high_dl = results("B", [0.2, 0.3, 0.4, 1.0, 2.0, 3.0, 1.0], [0, 0, 0, 0, 0, 0, 1])
    s = summary.summarise(pd.concat([low_dl, high_dl])).set_index("site_id")
    assert "Efron" in s.loc["A", "note"] and "Efron" not in s.loc["B", "note"]


def test_a_series_bootstrap_ucl_does_not_change_when_other_series_join_the_run():
    """Each series' resamples depend only on the seed and the series (its own seeded generator),
    so adding a site to the run leaves every other site's ucl95_mean unchanged (common practice:
    reproducible results per site)."""
    rng = np.random.default_rng(4)
    rows = []
    for site in ("A", "B", "C"):
        for k, v in enumerate(rng.lognormal(0, 1, 15)):
            rows.append({"site_id": site, "analyte": "arsenic", "fraction": "total",
                         "sampled_at": pd.Timestamp("2020-01-01") + pd.Timedelta(days=30 * k),
                         "value_ug_L": v if v > 0.5 else np.nan, "detected": v > 0.5,
                         "detection_limit_ug_L": 0.5, "sample_type": "sample"})
    data = pd.DataFrame(rows)
    two = summary.summarise(data[data["site_id"] != "B"], ucl="bootstrap", n_boot=500, seed=9).set_index("site_id")
    three = summary.summarise(data, ucl="bootstrap", n_boot=500, seed=9).set_index("site_id")
    assert two.loc[["A", "C"], "ucl95_mean"].tolist() == three.loc[["A", "C"], "ucl95_mean"].tolist()
    again = summary.summarise(data, ucl="bootstrap", n_boot=500, seed=9).set_index("site_id")
    assert again["ucl95_mean"].tolist() == three["ucl95_mean"].tolist()
    assert summary.summarise(data, ucl="bootstrap", n_boot=500, seed=10).set_index("site_id")["ucl95_mean"].tolist() != three["ucl95_mean"].tolist()


@pytest.mark.parametrize("dropna", [False, True])
def test_groups_number_rows_as_pandas_groupby(dropna):
    """The code-based grouping of the summary and exceedance tables numbers groups and picks first rows
    as pandas' ``groupby(sort=True, observed=True)`` does (reference library): categorical keys in
    category order with unused categories, text keys sorted, a missing key last (or left out)."""
    rng = np.random.default_rng(16)
    n = 400
    frame = pd.DataFrame({
        "site_id": pd.Categorical(rng.choice(["S2", "S1", "S3", None], n), categories=["S3", "S1", "S2", "S9"]),
        "analyte": pd.Series(rng.choice(["zinc", "lead", "copper", None], n), dtype="str"),
        "fraction": pd.Categorical(rng.choice(["total", "dissolved"], n)),
    })
    keys = ["site_id", "analyte", "fraction"]
    grouped = frame.groupby(keys, sort=True, observed=True, dropna=dropna)
    codes, first = summary._groups(frame, keys, dropna=dropna)
    assert codes.tolist() == grouped.ngroup().fillna(-1).astype(int).tolist()
    table = grouped.size().reset_index()[keys]
    pd.testing.assert_frame_equal(frame.iloc[first].reset_index(drop=True), table, check_column_type=False)
