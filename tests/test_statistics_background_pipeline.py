"""The whole chain (results -> background checks -> limits -> retest sequence / confidence limits)
on the Unified Guidance's worked examples (USEPA 2009; tests/data/usepa2009/README.md)."""

import numpy as np
import pandas as pd
import pytest
from usepa2009_examples import example, network, results_frame

from tracescreen.statistics.background.data import compliance_rows_for, monitoring_rows, series_table
from tracescreen.statistics.background.design import Design
from tracescreen.statistics.background.run import well_statistics
from tracescreen.statistics.background.standards import confidence_limits


def _dated(rows, analyte="sulfate"):
    out = []
    for well, date, value in rows:
        out.append({"site_id": well, "analyte": analyte, "fraction": "total", "sampled_at": pd.Timestamp(date),
                    "value_ug_L": value, "detected": True, "detection_limit_ug_L": np.nan,
                    "sample_type": "sample", "qualifier_meaning": ""})
    return pd.DataFrame(out)


def test_example_19_1_interwell_lognormal_limit_through_the_pipeline():
    """Example 19-1: pooled background of 4 wells (n = 25), lognormal (Shapiro-Wilk rejects the raw
    values, not the logs), 1-of-3 plan, 10 constituents x 50 wells, 2 evaluations: 159.5496 mg/L."""
    ex = example("19_1_sulfate")
    res = _dated(ex["rows"] + [["CW", "2004-01-01", 120.0]])
    net = network(["GW-01", "GW-04", "GW-08", "GW-09"], ["CW"], comparison="interwell")
    d = Design.from_mapping({**ex["design"], "plan": "1-of-3"})
    out = well_statistics(res, net, d)
    lim = out["prediction_limits"].iloc[0]
    assert lim["distribution"] == "lognormal" and lim["n_background"] == 25
    assert lim["kappa"] == pytest.approx(ex["published"]["kappa_1_of_3"], abs=2e-5)
    assert lim["limit_ug_L"] == pytest.approx(ex["published"]["upl_lognormal_1_of_3"], abs=0.005)
    bg = out["background"].iloc[0]
    assert bg["shapiro_w"] == pytest.approx(ex["published"]["shapiro_w"], rel=1e-5)
    assert bg["shapiro_log_p"] == pytest.approx(ex["published"]["shapiro_log_p"], rel=1e-5)
    assert out["well_status"].iloc[0]["latest_status"] == "within"


def test_example_19_2_intrawell_pooled_limits_through_the_pipeline():
    """Example 19-2: intrawell limits from 4 baseline values per well with the SD pooled over the
    10 wells (Levene's test passes; 30 df), modified California plan: the 10 printed limits."""
    ex = example("19_2_chloride")
    wells = {w: v + [40.0] for w, v in ex["wells"].items()}     # one compliance value after the baseline
    res = results_frame(wells, start="2000-01-01", analyte="chloride")
    net = network([], list(wells), comparison="intrawell", background_to="2000-12-31")
    d = Design.from_mapping({**ex["design"], "plan": "modified-california"})
    lim = well_statistics(res, net, d)["prediction_limits"].set_index("site_id")
    assert lim["sd_pooled"].all() and (lim["df"] == 30).all()
    assert lim["sd"].iloc[0] == pytest.approx(ex["published"]["pooled_sd"], abs=5e-6)
    assert lim["kappa"].iloc[0] == pytest.approx(ex["published"]["kappa_modified_california_pooled"], abs=2e-6)
    for well, upl in ex["published"]["upl_modified_california_pooled"].items():
        assert round(lim.at[well, "limit_ug_L"], 1) == upl, well


@pytest.mark.parametrize("plan,order,rank,limit", [("1-of-3", 1, 1, 0.28), ("1-of-4", 1, 3, 0.24),
                                                   ("modified-california", 1, 1, 0.28), ("1-of-2", 3, 1, 0.28)])
def test_example_19_5_nonparametric_limits_and_retest_outcomes(plan, order, rank, limit):
    """Example 19-5: each candidate plan that meets the per-constituent rate gets the highest
    background rank that still meets it, and CW-1 passes / CW-2 passes or fails as printed."""
    ex = example("19_5_mercury")
    res = results_frame(ex["wells"], start="2001-01-01", analyte="mercury")
    net = network(["BG-1", "BG-2", "BG-3", "BG-4"], ["CW-1", "CW-2"], comparison="interwell")
    d = Design.from_mapping({**ex["design"], "nonparametric_plans": [plan], "order": order})
    rows = monitoring_rows(res, net, d)
    from tracescreen.statistics.background.prediction import prediction_limits
    from tracescreen.statistics.background.sequence import evaluate_sequences
    pl = prediction_limits(rows, series_table(rows), d)["limits"].set_index("site_id")
    assert pl.at["CW-1", "rank_from_top"] == rank and pl.at["CW-1", "limit_ug_L"] == limit
    rows = compliance_rows_for(rows, pl.reset_index())   # interwell, no window: all compliance data
    seq = evaluate_sequences(rows, pl.reset_index(), d.evaluation_interval_days)["sequence"]
    expected = {(w, p) for pl_, o, r, w, p in ex["published"]["outcomes"] if (pl_, o, r) == (plan, order, rank)}
    for well, passes in expected:
        first_eval = seq[(seq["site_id"] == well) & (seq["evaluation"] == 1)]
        final = first_eval["status"].iloc[-1]
        assert final in (("within", "not_confirmed") if passes else ("confirmed_exceedance",)), (well, final)


def test_double_quantification_rule():
    """Never detected in background: a quantified result needs a quantified resample to confirm;
    an estimated (J) value between the detection and quantitation limits does not count (§6.2.2)."""
    bg = {"BG": ["<1"] * 10}
    res = results_frame(bg, start="2000-01-01", analyte="thallium")
    comp = pd.DataFrame([
        {"v": 2.0, "meaning": ""}, {"v": 0.8, "meaning": "detected_estimated"},   # not confirmed
        {"v": 3.0, "meaning": ""}, {"v": 2.5, "meaning": ""},                    # confirmed
    ])
    dates = pd.date_range("2003-01-01", periods=4, freq="MS")
    extra = pd.DataFrame({"site_id": "CW", "analyte": "thallium", "fraction": "total", "sampled_at": dates,
                          "value_ug_L": comp["v"], "detected": True, "detection_limit_ug_L": 0.5,
                          "sample_type": "sample", "qualifier_meaning": comp["meaning"]})
    out = well_statistics(pd.concat([res, extra]), network(["BG"], ["CW"], comparison="interwell"),
                          Design.from_mapping({"evaluations_per_year": 4}))
    assert out["prediction_limits"].iloc[0]["method"] == "double_quantification"
    assert list(out["retest_sequence"]["status"]) == ["initial_exceedance", "not_confirmed",
                                                      "initial_exceedance", "confirmed_exceedance"]
    assert "below the lowest background detection limit" in out["prediction_limits"].iloc[0]["limit_notes"]


def test_resample_must_come_before_the_next_evaluation_and_nondetects_never_exceed():
    """A pending exceedance with no resample within the evaluation interval is closed as a missing
    resample; a non-detect whose detection limit is above the limit is inconclusive, never above."""
    rng = np.random.default_rng(5)
    bg = {"BG": list(np.round(rng.normal(10, 1, 12), 2))}
    res = results_frame(bg, start="2000-01-01", analyte="arsenic")
    dates = pd.to_datetime(["2004-01-01", "2005-06-01", "2005-06-20", "2005-09-01"])
    extra = pd.DataFrame({"site_id": "CW", "analyte": "arsenic", "fraction": "total", "sampled_at": dates,
                          "value_ug_L": [40.0, 30.0, np.nan, 9.0], "detected": [True, True, False, True],
                          "detection_limit_ug_L": [np.nan, np.nan, 50.0, np.nan], "sample_type": "sample",
                          "qualifier_meaning": ""})
    out = well_statistics(pd.concat([res, extra]), network(["BG"], ["CW"], comparison="interwell"),
                          Design.from_mapping({"evaluations_per_year": 2}))
    seq = out["retest_sequence"]
    assert list(seq["comparison"]) == ["above", "above", "inconclusive", "within"]
    assert list(seq["status"]) == ["initial_exceedance", "initial_exceedance", "inconclusive", "not_confirmed"]
    assert "closed as resample_missing" in seq["note"].iloc[1] and seq["note"].iloc[0] == ""
    st = out["well_status"].iloc[0]
    assert st["n_resamples_missing"] == 1 and st["latest_status"] == "not_confirmed"


def test_confidence_limits_against_standards_examples_21_1_and_21_7():
    """Example 21-1 through the pipeline (normal means vs 7 ppb: wells 1 and 2 exceed, 3 does not);
    Example 21-7 (a significant downward trend): the trend-line band's upper limit at month 30,
    12.87 ppb (errata), is below 20 ppb, so a corrective-action well meets the standard."""
    ex = example("21_1_aldicarb")
    res = results_frame(ex["wells"], start="2000-01-01", analyte="aldicarb")
    net = network([], list(ex["wells"]), comparison="intrawell", stage="assessment")
    d = Design.from_mapping({"min_background": 2})
    rows = monitoring_rows(res, net, d)
    rows["period"] = "compliance"
    series = series_table(rows)
    std = series[["site_id", "analyte", "fraction"]].assign(limit_table="t", entry_id="e", standard_ug_L=7.0,
                                                             standard_basis="table")
    out = confidence_limits(rows, series, std, d).set_index("site_id")
    for well, lcl in ex["published"]["lcl95_mean"].items():
        assert out.at[well, "lcl_ug_L"] == pytest.approx(lcl, abs=0.006)
        assert (out.at[well, "decision"] == "exceeds") == ex["published"]["exceeds_mean_standard"][well]
    t = example("21_7_tce")
    start = pd.Timestamp("2000-01-01")
    dates = [start + pd.DateOffset(months=m) for m in t["months"]]
    tce = pd.DataFrame({"site_id": "MW", "analyte": "trichloroethene", "fraction": "total", "sampled_at": dates,
                        "value_ug_L": t["values"], "detected": True, "detection_limit_ug_L": np.nan,
                        "sample_type": "sample", "qualifier_meaning": ""})
    rows = monitoring_rows(tce, network([], ["MW"], stage="corrective"), Design.from_mapping({"min_background": 2}))
    rows["period"] = "compliance"
    series = series_table(rows)
    std = series[["site_id", "analyte", "fraction"]].assign(limit_table="t", entry_id="e", standard_ug_L=20.0,
                                                             standard_basis="table")
    d = Design.from_mapping({"ci_last_n": 10})
    r = confidence_limits(rows, series, std, d).iloc[0]
    assert r["method"] == "trend_line_band"
    # months are calendar months here, so the band is in years: same fitted line, same band at month 30
    assert r["ucl_ug_L"] == pytest.approx(t["published"]["ucl95_month_30_errata"], abs=0.02)
    assert r["decision"] == "meets" and pd.notna(r["ucl_below_standard_from"])


def test_design_statement_states_what_the_guidance_asks():
    """The statement names the SWFPR and its sharing, the plan, kappa per distinct design, the
    background window, the non-detect handling and the caution; constituents never detected in
    background (Double Quantification Rule) are left out of the SWFPR count (USEPA 2009, §6.2.2)."""
    ex = example("19_1_sulfate")
    res = _dated(ex["rows"] + [["CW", "2004-01-01", 120.0]])
    never = _dated([[w, d, 1.0] for w, d, _ in ex["rows"]], analyte="thallium").assign(
        value_ug_L=np.nan, detected=False, detection_limit_ug_L=1.0)
    out = well_statistics(pd.concat([res, never]), network(["GW-01", "GW-04", "GW-08", "GW-09"], ["CW"],
                                                                  comparison="interwell"),
                          Design.from_mapping({"plan": "1-of-3", "evaluations_per_year": 2}))
    st = dict(zip(out["design_statement"]["topic"], out["design_statement"]["statement"]))
    assert "SWFPR) 0.1" in st["Design"] and "1 compliance well(s) x 1 constituent(s)" in st["Design"]
    assert "1-of-3" in st["Retesting"] and "n = 25, 24 df" in st["Multipliers"]
    assert "Double Quantification Rule" in st["Non-detects"]
    assert "do not replace" in st["Caution"]


def test_censored_trend_gets_a_bootstrap_band_around_the_theil_sen_line():
    """A rising series with non-detects: the Akritas-Theil-Sen line at the latest date lies inside
    its bootstrap band, the band is reproducible (seeded) and brackets the true line value
    (invented series: 1 + 0.5 µg/L per year, detection limit 1)."""
    dates = pd.date_range("2010-01-01", periods=24, freq="QS")
    years = (dates - dates[0]).days / 365.25
    rng = np.random.default_rng(21)
    v = 1 + 0.5 * years + rng.normal(0, 0.4, 24)
    res = pd.DataFrame({"site_id": "MW", "analyte": "arsenic", "fraction": "total", "sampled_at": dates,
                        "value_ug_L": np.where(v >= 1, v, np.nan), "detected": v >= 1, "detection_limit_ug_L": 1.0,
                        "sample_type": "sample", "qualifier_meaning": ""})
    d = Design.from_mapping({"min_background": 2, "ci_last_n": 24})
    rows = monitoring_rows(res, network([], ["MW"]), d)
    rows["period"] = "compliance"
    series = series_table(rows)
    std = series[["site_id", "analyte", "fraction"]].assign(limit_table="t", entry_id="e", standard_ug_L=10.0,
                                                             standard_basis="table")
    a = confidence_limits(rows, series, std, d).iloc[0]
    b = confidence_limits(rows, series, std, d).iloc[0]
    assert rows["nondetect"].any() and a["method"] == "censored_trend_line_bootstrap"
    assert a["lcl_ug_L"] < a["estimate_ug_L"] < a["ucl_ug_L"] and a["ucl_ug_L"] == b["ucl_ug_L"]
    assert a["lcl_ug_L"] < 1 + 0.5 * years[-1] < a["ucl_ug_L"]


def test_constituent_window_replaces_the_well_window():
    """A compliance well's baseline for one constituent ends where that constituent's own window
    ends; its other constituents keep the well's window (a window per well/constituent: README.md#wells-against-background-and-standards-tracescreen-wells)."""
    dates = pd.date_range("2015-01-01", periods=20, freq="QS")
    res = pd.concat([results_frame({"MW": list(np.linspace(1, 2, 20))}, start="2015-01-01", analyte=a)
                     for a in ("arsenic", "lead")])
    net = network([], ["MW"], background_to="2018-12-31")
    net["analyte"] = ""
    net = pd.concat([net, pd.DataFrame({"site_id": ["MW"], "role": [""], "well_group": ["all"], "comparison": ["auto"],
                                        "stage": ["detection"], "background_from": [pd.NaT],
                                        "background_to": [pd.Timestamp("2016-12-31")], "analyte": ["lead"]})])
    rows = monitoring_rows(res, net, Design())
    base = rows[rows["period"] == "baseline"].groupby("analyte").size()
    assert base["arsenic"] == 16 and base["lead"] == 8
    assert dates[15] <= pd.Timestamp("2018-12-31")


def test_well_figure_draws_background_limit_sequence_and_chart():
    """The chart of a well: background points, the limit line, compliance values by retest status
    and the control-chart panel with its h and SCL lines (Example 20-1's nickel as one well's
    baseline and compliance values)."""
    from tracescreen.report.well_figures import well_figure
    ex = example("20_1_nickel")
    res = results_frame({"MW": ex["baseline"] + ex["compliance"]}, start="1995-01-01", freq="MS", analyte="nickel")
    out = well_statistics(res, network([], ["MW"], comparison="intrawell", background_to="1995-08-31"), Design())
    fig = well_figure(out, "MW", "nickel", "total")
    names = [t.name for t in fig.data]
    assert "background" in names and any(n.startswith("prediction limit") for n in names)
    assert "Shewhart limit = 4.5" in names and "CUSUM decision interval h = 5" in names
    assert "out of control" in names     # month 8: z = 4.92 > 4.5
    assert out["control_charts"]["status"].iloc[-1] == "resample_required"
