"""A result far outside its own history (tracescreen.retest.outliers): modified z-scores against scipy and the definition."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.stats
from flag_frames import quarterly_series as _series
from flag_frames import screening

from tracescreen.retest import outliers


def test_modified_z_score_matches_scipy_mad():
    """Modified z-score equals (x − median)/MAD_normal with scipy.stats.median_abs_deviation(scale='normal') (Iglewicz & Hoaglin 1993)."""
    rng = np.random.default_rng(1)
    hist = rng.normal(size=(50, 12))
    x = rng.normal(scale=4, size=50)
    z = outliers.modified_z_score(x, hist)
    ref = (x - np.median(hist, axis=1)) / scipy.stats.median_abs_deviation(hist, axis=1, scale="normal")
    # 0.6745 (Iglewicz & Hoaglin) vs scipy's 1/1.4826 = 0.67449: relative difference < 1e-4
    np.testing.assert_allclose(z, ref, rtol=1e-4)


def test_history_outlier_threshold_and_min_prior():
    """ln-values with median 0 and MAD 1: z = 0.6745·ln x; 3.6 flags, 3.4 does not; 7 earlier detects are too few (≥ 8 needed)."""
    logs = [-2, -1, -1, 0, 0, 1, 1, 2]  # median 0, MAD 1 (by hand)
    hi = np.exp(3.6 / 0.6745)
    lo = np.exp(3.4 / 0.6745)
    for last, expect in ((hi, ["Q8"]), (lo, []), (1 / hi, ["Q8"])):
        rows = _series(list(np.exp(logs)) + [last])
        out = outliers.history_outlier(screening(rows, [("none", 1e9)]))
        assert list(out["sample_id"]) == expect
    rows = _series(list(np.exp(logs[1:])) + [hi])  # only 7 earlier detects
    assert outliers.history_outlier(screening(rows, [("none", 1e9)])).empty


def test_history_outlier_ignores_nondetects_and_other_series():
    """Non-detects are not part of the history; another site's values do not count as history."""
    logs = [-2, -1, -1, 0, 0, 1, 1, 2]
    rows = _series(list(np.exp(logs)) + [np.exp(6.0)])
    rows[3] = dict(rows[3], nd=True)  # now only 7 earlier detects
    other = [dict(r, site_id="S2", sample_id="O" + r["sample_id"]) for r in _series(list(np.exp(logs)))]
    out = outliers.history_outlier(screening(rows + other, [("none", 1e9)]))
    assert out.empty


def test_history_outlier_constant_history_uses_mean_absolute_deviation():
    """With MAD = 0 the mean absolute deviation ×1.253314 scales the score (common practice); all-equal history scores nothing."""
    rows = _series([1, 1, 1, 1, 1, 1, 2, 1, 50])
    out = outliers.history_outlier(screening(rows, [("none", 1e9)]))
    assert list(out["sample_id"]) == ["Q8"]
    rows = _series([1] * 8 + [50])
    assert outliers.history_outlier(screening(rows, [("none", 1e9)])).empty


def test_expanding_modified_z_equals_direct_definition():
    """Sorted-history modified z-scores equal modified_z_score against each row's explicit earlier values and
    numpy.median of them (Iglewicz & Hoaglin 1993 definition), with ties, a zero MAD and series of many lengths."""
    from tracescreen.retest.outliers import expanding_modified_z, modified_z_score

    rng = np.random.default_rng(5)
    for trial in range(60):
        lens = rng.integers(1, 30, rng.integers(1, 8))
        pos = np.concatenate([np.arange(n) for n in lens])
        x = np.log(np.round(rng.lognormal(0, 1, len(pos)), int(rng.integers(0, 3))) + 0.01)
        if trial % 4 == 0:
            x = np.round(x)  # many equal values: the MAD is often zero
        min_prior = int(rng.integers(1, 9))
        z, med = expanding_modified_z(x, pos, min_prior)
        start = np.arange(len(x)) - pos
        for r in range(len(x)):
            if pos[r] < min_prior:
                assert np.isnan(z[r]) and np.isnan(med[r])
                continue
            hist = x[start[r]:r]
            ref = modified_z_score(x[r:r + 1], hist[None, :])[0]
            assert med[r] == np.median(hist)
            assert (np.isnan(ref) and np.isnan(z[r])) or z[r] == pytest.approx(ref, rel=1e-12)


def test_expanding_modified_z_in_groups_of_series_equals_one_pass(monkeypatch):
    """Series taken a few at a time (a small HISTORY_CELLS, as for one very long series among many short
    ones) give the same scores as all series at once (checked against the definition above)."""
    from tracescreen.retest import outliers

    rng = np.random.default_rng(11)
    lens = np.array([120, 3, 40, 40, 9, 1, 70, 25, 25, 25, 2, 60])
    pos = np.concatenate([np.arange(n) for n in lens])
    x = np.log(np.round(rng.lognormal(0, 1, len(pos)), 2) + 0.01)
    whole = outliers.expanding_modified_z(x, pos, 8)
    monkeypatch.setattr(outliers, "HISTORY_CELLS", 130)  # the 120-long series alone, then groups of the rest
    grouped = outliers.expanding_modified_z(x, pos, 8)
    np.testing.assert_array_equal(grouped[0], whole[0])
    np.testing.assert_array_equal(grouped[1], whole[1])
