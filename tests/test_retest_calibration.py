"""Calibration checks: fits against numpy / scipy / statsmodels, the lack-of-fit F test against
statsmodels' nested-model ANOVA, LOD/LOQ on a constructed calibration with known sigma, and the
40 CFR 136 Appendix B (rev. 2) MDL procedure against its Student t table.

Sources of check values:
* reference libraries from the registries: numpy.polyfit, scipy.stats.linregress,
  statsmodels WLS / OLS and anova_lm;
* t(n-1, 0.99) table of the MDL procedure, as reproduced in Wisconsin Administrative Code NR
  252.0365 (seen, via /work/shared/docs/field-methods.md 2.4): 7 -> 3.143, 8 -> 2.998, 9 -> 2.896,
  10 -> 2.821, 11 -> 2.764, 16 -> 2.602, 21 -> 2.528, 26 -> 2.485, 31 -> 2.457, 61 -> 2.390;
* ICH Q2(R2): DL = 3.3 sigma / S, QL = 10 sigma / S (seen in the R package measure's documentation,
  via the same notes).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
import statsmodels.formula.api as smf
from labqc_frames import results
from scipy import stats
from statsmodels.stats.anova import anova_lm

from tracescreen.retest.calibration.checks import analyte_ranges, check_results
from tracescreen.retest.calibration.fit import concentration_from_response, fit_curves
from tracescreen.retest.calibration.limits import curve_limits, lod_loq, mdl, t99
from tracescreen.retest.calibration.reading import CalibrationFileError, read_calibration

X = np.array([0, 0, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20], dtype=float)
Y = np.array([0.002, 0.004, 0.051, 0.049, 0.103, 0.099, 0.246, 0.258, 0.497, 0.512, 0.981, 1.020])


def _points(x, y, analyte="lead", run="R1"):
    return pd.DataFrame({"analyte": analyte, "run": run, "concentration_ug_L": x, "response": y})


def test_ordinary_fit_matches_numpy_and_scipy():
    fits, pts = fit_curves(_points(X, Y))
    f = fits.iloc[0]
    ref = stats.linregress(X, Y)
    assert (f["slope"], f["intercept"]) == pytest.approx(tuple(np.polyfit(X, Y, 1)), rel=1e-12)
    assert f["r"] == pytest.approx(ref.rvalue, rel=1e-12)
    assert (f["se_slope"], f["se_intercept"]) == pytest.approx((ref.stderr, ref.intercept_stderr), rel=1e-10)
    resid = Y - (ref.intercept + ref.slope * X)
    assert f["residual_sd"] == pytest.approx(np.sqrt((resid ** 2).sum() / (len(X) - 2)), rel=1e-12)
    assert pts["back_calculated_ug_L"].to_numpy() == pytest.approx((Y - ref.intercept) / ref.slope)
    assert (f["n"], f["levels"], f["lowest_standard_ug_L"], f["highest_standard_ug_L"]) == (12, 6, 1.0, 20.0)


@pytest.mark.parametrize("weighting,power", [("1/x", 1), ("1/x2", 2)])
def test_weighted_fit_matches_statsmodels_wls(weighting, power):
    fits, _ = fit_curves(_points(X, Y), weighting)
    xe = np.where(X > 0, X, 1.0)          # zero-concentration points weighted as the lowest standard
    ref = sm.WLS(Y, sm.add_constant(X), weights=1.0 / xe ** power).fit()
    f = fits.iloc[0]
    assert (f["intercept"], f["slope"]) == pytest.approx(tuple(ref.params), rel=1e-10)
    assert (f["se_intercept"], f["se_slope"]) == pytest.approx(tuple(ref.bse), rel=1e-9)
    assert f["residual_sd"] == pytest.approx(np.sqrt(ref.scale), rel=1e-10)
    assert f["weighting"] == weighting


def test_many_curves_at_once_equal_one_at_a_time():
    both = pd.concat([_points(X, Y), _points(X, 2 * Y + 0.01, "copper", "R2")], ignore_index=True)
    fits, _ = fit_curves(both)
    one, _ = fit_curves(_points(X, 2 * Y + 0.01, "copper", "R2"))
    assert fits.set_index("analyte").loc["copper", "slope"] == pytest.approx(one["slope"].iloc[0], rel=1e-12)


def test_lack_of_fit_matches_statsmodels_nested_anova():
    xq = np.repeat([1.0, 2.0, 4.0, 8.0, 16.0], 3)
    yq = 0.05 * xq + 0.0015 * xq ** 2 + np.tile([-0.004, 0.001, 0.003], 5)   # curved: lack of fit
    fits, _ = fit_curves(_points(xq, yq))
    df = pd.DataFrame({"x": xq, "y": yq})
    ref = anova_lm(smf.ols("y ~ x", df).fit(), smf.ols("y ~ C(x)", df).fit())
    f = fits.iloc[0]
    assert f["lack_of_fit_F"] == pytest.approx(ref["F"].iloc[1], rel=1e-9)
    assert f["lack_of_fit_p"] == pytest.approx(ref["Pr(>F)"].iloc[1], rel=1e-6)
    assert (f["lack_of_fit_df1"], f["lack_of_fit_df2"]) == (3, 10)
    unrep, _ = fit_curves(_points(np.array([1.0, 2, 4, 8]), np.array([0.05, 0.1, 0.2, 0.4])))
    assert np.isnan(unrep["lack_of_fit_F"].iloc[0])                       # no replicates: no test


def test_lod_loq_on_a_constructed_calibration_with_known_sigma():
    # y = 0.002 + 0.05 x + e, e orthogonal to (1, x) and scaled so that sum(e^2) / (n - 2) = sigma^2:
    # the fit returns the line exactly and s = sigma, so LOD = 3.3 sigma / 0.05, LOQ = 10 sigma / 0.05
    sigma = 0.004
    x = np.array([0.0, 1, 2, 5, 10, 20, 50])
    rng = np.random.default_rng(7)
    e = rng.normal(size=len(x))
    basis = np.column_stack([np.ones_like(x), x])
    e -= basis @ np.linalg.lstsq(basis, e, rcond=None)[0]
    e *= sigma / np.sqrt((e ** 2).sum() / (len(x) - 2))
    fits, _ = fit_curves(_points(x, 0.002 + 0.05 * x + e))
    lim = curve_limits(fits)
    assert lim["slope"].iloc[0] == pytest.approx(0.05, rel=1e-12)
    assert lim["sigma"].iloc[0] == pytest.approx(sigma, rel=1e-12)
    assert lim["lod_ug_L"].iloc[0] == pytest.approx(3.3 * sigma / 0.05, rel=1e-12)    # 0.264 ug/L
    assert lim["loq_ug_L"].iloc[0] == pytest.approx(10 * sigma / 0.05, rel=1e-12)     # 0.8 ug/L
    assert lod_loq(0.004, 0.05) == (0.264, 0.8)


def test_lod_from_replicate_calibration_blanks():
    pts = _points(X, Y).assign(kind=np.where(X == 0, "calibration_blank", "standard"))
    fits, _ = fit_curves(pts)
    lim = curve_limits(fits, pts)
    sd = np.std(Y[X == 0], ddof=1)
    assert lim["sigma_from"].iloc[0] == "SD of calibration-blank responses"
    assert lim["lod_ug_L"].iloc[0] == pytest.approx(3.3 * sd / fits["slope"].iloc[0])


@pytest.mark.parametrize("n,t", [(7, 3.143), (8, 2.998), (9, 2.896), (10, 2.821), (11, 2.764), (16, 2.602),
                                 (21, 2.528), (26, 2.485), (31, 2.457), (61, 2.390)])
def test_student_t_of_the_mdl_procedure(n, t):
    assert round(float(t99(n)), 3) == t


def test_mdl_procedure_worked_example():
    # seven spiked replicates at 0.5 ug/L: MDL_s = t(6, 0.99) x S = 3.143 x S (within the table's rounding)
    spiked = pd.DataFrame({"analyte": "lead", "result_ug_L": [0.48, 0.52, 0.45, 0.55, 0.50, 0.47, 0.53]})
    s = np.std(spiked["result_ug_L"], ddof=1)
    # blanks: all numerical -> mean (0 if negative) + t x SD; some numerical -> the highest; none -> n/a
    blanks = pd.DataFrame({"analyte": ["lead"] * 7 + ["copper"] * 3 + ["zinc"] * 2,
                           "result_ug_L": [0.02, 0.05, -0.01, 0.03, 0.00, 0.04, 0.01, 0.2, np.nan, 0.1,
                                           np.nan, np.nan]})
    spiked = pd.concat([spiked, pd.DataFrame({"analyte": ["copper"] * 7 + ["zinc"] * 7,
                                              "result_ug_L": np.r_[np.linspace(1, 1.3, 7), np.linspace(2, 2.6, 7)]})])
    m = mdl(spiked, blanks).set_index("analyte")
    lead = m.loc["lead"]
    assert lead["mdl_s_ug_L"] == pytest.approx(3.143 * s, rel=2e-4)
    bl = np.array([0.02, 0.05, -0.01, 0.03, 0.00, 0.04, 0.01])
    assert lead["mdl_b_ug_L"] == pytest.approx(bl.mean() + t99(7) * bl.std(ddof=1))
    assert lead["mdl_ug_L"] == pytest.approx(max(lead["mdl_s_ug_L"], lead["mdl_b_ug_L"]))
    assert m.loc["copper", "mdl_b_ug_L"] == 0.2 and "highest" in m.loc["copper", "mdl_b_rule"]
    assert np.isnan(m.loc["zinc", "mdl_b_ug_L"]) and m.loc["zinc", "mdl_ug_L"] == m.loc["zinc", "mdl_s_ug_L"]
    few = mdl(pd.DataFrame({"analyte": "lead", "result_ug_L": [1.0, 1.1, 0.9]}))
    assert "at least 7" in few["note"].iloc[0]


def test_auto_weighting_follows_the_spread_of_replicates():
    x = np.repeat([1.0, 5.0, 25.0], 4)
    spread = np.tile([-1.0, 1.0, -0.5, 0.5], 3)
    hetero, _ = fit_curves(_points(x, 0.1 * x + 0.01 * x * spread), "auto")
    homo, _ = fit_curves(_points(x, 0.1 * x + 0.01 * spread), "auto")
    assert hetero["weighting"].iloc[0] == "1/x2" and homo["weighting"].iloc[0] == "none"


def test_concentration_recomputed_from_a_response():
    fits, _ = fit_curves(_points(X, Y))
    f = fits.iloc[0]
    assert concentration_from_response(0.5, f["slope"], f["intercept"]) == pytest.approx((0.5 - f["intercept"]) / f["slope"])


def test_results_against_the_calibration():
    fits, pts = fit_curves(_points(X, Y))
    ranges = analyte_ranges(curve_limits(fits, pts))
    res = results({"sample_id": "hi", "value_ug_L": 20.01, "batch": "R1", "detection_limit_ug_L": 1.0},  # > 20
                  {"sample_id": "top", "value_ug_L": 20.0, "batch": "R1", "detection_limit_ug_L": 1.0},
                  {"sample_id": "lo", "value_ug_L": 0.99, "batch": "other", "detection_limit_ug_L": 1.0},  # < 1
                  {"sample_id": "nd", "detected": False, "detection_limit_ug_L": 0.001})   # DL below the LOD
    out = check_results(res, ranges)
    assert out[["sample_id", "reason"]].values.tolist() == [["hi", "above_calibration_range"],
                                                            ["lo", "below_calibration_range"],
                                                            ["nd", "dl_not_supported"]]
    assert "calibration LOD" in out["detail"].iloc[2]


def test_calibration_file(tmp_path):
    p = tmp_path / "cal.csv"
    p.write_text("Calibration of 2024-05-02\n"
                 "Element,Run,Type,Conc,Unit,Absorbance,Result\n"
                 "Pb,R1,Blank,0,ug/L,0.002,\n"
                 "Pb,R1,Std,0.001,mg/L,0.050,\n"
                 "Pb,R1,Std,10,ug/L,0.497,\n"
                 "Pb,R1,MDL spike,0.5,ug/L,,0.48\n"
                 "Unobtainium,R1,Std,10,ug/L,0.4,\n"
                 "Pb,R1,Std,20,ug/L,,\n", encoding="utf-8")
    cal = read_calibration(p)
    assert cal.rows_read == len(cal.points) + len(cal.rejected) == 6
    assert cal.points["kind"].tolist() == ["calibration_blank", "standard", "standard", "mdl_spike"]
    assert cal.points["concentration_ug_L"].tolist()[:3] == pytest.approx([0.0, 1.0, 10.0])
    assert cal.rejected["row"].tolist() == [7, 8]
    assert "not in the analyte registry" in cal.rejected["reason"].iloc[0]
    with pytest.raises(CalibrationFileError, match="nope.csv: calibration file not found"):
        read_calibration(tmp_path / "nope.csv")


def test_sample_concentrations_recomputed_from_their_responses(tmp_path):
    # the reviewer's recomputation: x = (y - a) / b on the fitted curve, beside the reported result
    p = tmp_path / "cal.csv"
    p.write_text("analyte,run,kind,sample_id,concentration,response,result\n"
                 "lead,R1,standard,,0,0.002,\nlead,R1,standard,,10,0.502,\nlead,R1,standard,,20,1.002,\n"
                 "lead,R1,sample,W-7,,0.252,5.3\nlead,R1,sample,W-8,,1.502,30\n", encoding="utf-8")
    from tracescreen.retest.calibration.fit import recompute_samples
    cal = read_calibration(p)
    fits, _ = fit_curves(cal.points)
    s = recompute_samples(cal.points, fits).set_index("sample_id")
    assert fits["slope"].iloc[0] == pytest.approx(0.05) and fits["intercept"].iloc[0] == pytest.approx(0.002)
    assert s.loc["W-7", "recomputed_ug_L"] == pytest.approx(5.0)
    assert s.loc["W-7", "difference_pct"] == pytest.approx(6.0)
    assert s.loc["W-8", "recomputed_ug_L"] == pytest.approx(30.0) and not s.loc["W-8", "within_standards"]
