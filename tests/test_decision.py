"""Rounding convention, measurement-uncertainty decision rule, effective dates and several uses per site."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from flag_frames import results as make_results

from tracescreen.cli import main
from tracescreen.limits.load import LimitTableError, load_limits
from tracescreen.screening import rounding, uncertainty
from tracescreen.screening.screen import screen
from tracescreen.screening.status import worst_status
from tracescreen.vocabulary import STATUSES

LIMITS_DIR = Path(__file__).resolve().parents[1] / "limits"


def table(tmp_path, entries: str, settings: str = "{rounding: significant_figures}", unit: str = "mg/L",
          name: str = "t.yaml", use: str = "drinking_water"):
    p = tmp_path / name
    p.write_text(f"id: {p.stem}\nname: test\nsource: constructed for a test\nuse: {use}\nunit: {unit}\n"
                 f"settings: {settings}\nentries:\n{entries}", encoding="utf-8")
    return load_limits(p)


@pytest.mark.parametrize("text, figures", [
    ("0.010", 2), ("0.01", 1), ("10", 2), ("50", 2), ("1.30", 3), ("2", 1), ("1.3", 2), ("1e-3", 1),
    ("0.0050", 2), ("abc", np.nan), (None, np.nan),
])
def test_significant_figures_as_written(text, figures):
    """Significant figures of a limit as written: leading zeros not counted, trailing zeros counted (common practice)."""
    got = rounding.significant_figures(text)
    assert (np.isnan(got) and np.isnan(figures)) or got == figures


@pytest.mark.parametrize("value_ug_l, nd, status", [
    (10.4, False, "meets"),       # 0.0104 mg/L -> 0.010: meets an MCL written 0.010
    (10.49, False, "meets"),
    (10.5, False, "exceeds"),     # 0.0105 -> 0.011 (halves up)
    (9.5, False, "meets"),        # 0.0095 -> 0.010, equal meets
    (11.0, False, "exceeds"),
    (10.4, True, "nondetect_meets"),          # <0.0104 -> <0.010
    (10.5, True, "nondetect_inconclusive"),   # <0.0105 -> <0.011
])
def test_rounding_to_the_limits_significant_figures(tmp_path, value_ug_l, nd, status):
    """Limit 0.010 mg/L (2 significant figures): the result is rounded to 0.001 mg/L before comparing (edge cases by hand)."""
    lim = table(tmp_path, "  - {analyte: arsenic, fraction: total, value: 0.010}\n")
    res = make_results([{"analyte": "arsenic", "sampled_at": "2021-01-01", "value": value_ug_l, "nd": nd,
                         "detection_limit_ug_L": value_ug_l if nd else 1.0}])
    out = screen(res, lim)
    assert out["status"].tolist() == [status]
    assert "compared after rounding to 2 significant figures" in out["note"].iloc[0]


def test_rounding_follows_the_written_precision_and_explicit_figures(tmp_path):
    """0.01 (1 figure) rounds 14.9 µg/L to 10 (meets) and 15 to 20 (exceeds); significant_figures: 3 keeps 10.4 > 10.0."""
    lim = table(tmp_path, "  - {analyte: arsenic, fraction: total, value: 0.01}\n")
    res = make_results([{"analyte": "arsenic", "sampled_at": "2021-01-01", "value": v} for v in (14.9, 15.0)])
    assert screen(res, lim)["status"].tolist() == ["meets", "exceeds"]
    lim3 = table(tmp_path, "  - {analyte: arsenic, fraction: total, value: 0.01, significant_figures: 3}\n")
    res = make_results([{"analyte": "arsenic", "sampled_at": "2021-01-01", "value": 10.4}])
    assert screen(res, lim3)["status"].tolist() == ["exceeds"]


def test_without_the_setting_no_rounding(tmp_path):
    """A table without the rounding setting compares unrounded: 10.4 µg/L exceeds 0.010 mg/L (README.md#limits-on-period-statistics-rounding-and-other-rules)."""
    lim = table(tmp_path, "  - {analyte: arsenic, fraction: total, value: 0.010}\n", settings="{}")
    res = make_results([{"analyte": "arsenic", "sampled_at": "2021-01-01", "value": 10.4}])
    out = screen(res, lim)
    assert out["status"].tolist() == ["exceeds"] and np.isnan(out["compared_value_ug_L"].iloc[0])


def test_rounding_a_hardness_formula_criterion(tmp_path):
    """Copper CMC at H 100 is 13.44 µg/L, printed 13 (2 figures): 13.45 meets after rounding both, 13.5 -> 14 exceeds."""
    lim = table(tmp_path, "  - {analyte: copper, fraction: dissolved, significant_figures: 2,\n"
                          "     hardness_formula: {m: 0.9422, b: -1.700, cf: 0.960}}\n", unit="µg/L",
                use="freshwater_aquatic")
    res = make_results([{"analyte": "copper", "fraction": "dissolved", "sampled_at": "2021-01-01", "value": v,
                         "hardness_mg_L": 100.0} for v in (13.45, 13.5)])
    out = screen(res, lim)
    assert out["limit_ug_L"].tolist() == [13.0, 13.0]
    assert out["status"].tolist() == ["meets", "exceeds"]


def test_significant_figures_key_is_checked(tmp_path):
    """significant_figures must be a whole number >= 1 (load error names the key)."""
    with pytest.raises(LimitTableError, match="significant_figures"):
        table(tmp_path, "  - {analyte: arsenic, fraction: total, value: 0.01, significant_figures: 0.5}\n")


# --- effective dates, on both sides of each switch in the shipped tables ---------------------------

@pytest.mark.parametrize("day, limit, status", [
    ("2036-01-11", 10.0, "meets"), ("2036-01-12", 5.0, "exceeds"),
])
def test_eu_lead_switches_on_12_january_2036(day, limit, status):
    """EU 2020/2184 Annex I Part B lead: 10 µg/L until 11 January 2036, 5 µg/L from 12 January 2036; 7 µg/L on each side."""
    lim = load_limits(LIMITS_DIR / "eu_dwd_2020_2184.yaml")
    out = screen(make_results([{"sampled_at": day, "value": 7.0}]), lim)
    assert out[["limit_ug_L", "status"]].values.tolist() == [[limit, status]]


@pytest.mark.parametrize("day, limit", [("2006-01-22", 50.0), ("2006-01-23", 10.0)])
def test_us_arsenic_mcl_switches_on_23_january_2006(day, limit):
    """40 CFR 141.11(b) / 141.62(b): arsenic MCL 0.05 mg/L until 22 January 2006, 0.010 mg/L from 23 January 2006."""
    lim = load_limits(LIMITS_DIR / "us_epa_npdwr_inorganics.yaml")
    out = screen(make_results([{"analyte": "arsenic", "sampled_at": day, "value": 20.0}]), lim)
    assert out["limit_ug_L"].tolist() == [limit]
    # one sampling day: a point sampled once a year or less, where the single result decides (141.23(i)(2))
    assert out["basis"].tolist() == ["single_sample"]


@pytest.mark.parametrize("day, limit, status", [("2027-06-30", 15.0, "meets"), ("2028-01-15", 10.0, "exceeds")])
def test_us_lead_action_level_switches_on_1_november_2027(day, limit, status):
    """Lead action level 0.015 mg/L before, 0.010 mg/L from 1 November 2027 (89 FR 86418); a 12 µg/L 90th percentile."""
    lim = load_limits(LIMITS_DIR / "us_epa_npdwr_inorganics.yaml")
    out = screen(make_results([{"sampled_at": day, "value": 12.0}]), lim)
    row = out[out["basis"] == "percentile"]
    assert row[["limit_ug_L", "status"]].values.tolist() == [[limit, status]]


# --- measurement uncertainty decision rule ---------------------------------------------------------

@pytest.mark.parametrize("value, u, factor, expected", [
    (12.0, 1.5, 1.0, "exceeds_beyond_uncertainty"),   # 12 - 1.5 = 10.5 > 10
    (11.0, 1.5, 1.0, "exceeds_within_uncertainty"),   # 10 < 11 <= 11.5
    (9.0, 1.5, 1.0, "meets_within_uncertainty"),      # 9 + 1.5 = 10.5 > 10
    (8.5, 1.5, 1.0, "meets_beyond_uncertainty"),      # 8.5 + 1.5 = 10 <= 10 (boundary)
    (12.0, 1.5, 2.0, "exceeds_within_uncertainty"),   # g = 3: 12 - 3 = 9 <= 10
    (12.0, np.nan, 1.0, "uncertainty_not_given"),
])
def test_guard_band_zones(value, u, factor, expected):
    """Eurachem/CITAC (2021) guard band g = f x U around a limit of 10 µg/L: the four zones, worked by hand."""
    res = make_results([{"sampled_at": "2021-01-01", "value": value, "uncertainty_ug_L": u}])
    scr = pd.DataFrame({"detected": [True], "value_ug_L": [value], "limit_ug_L": [10.0],
                        "uncertainty_ug_L": res["uncertainty_ug_L"], "basis": ["single_sample"]})
    out = uncertainty.uncertainty_decision(scr, factor)
    assert out["uncertainty_decision"].tolist() == [expected]
    assert out["guard_band_ug_L"].iloc[0] == pytest.approx(factor * u, nan_ok=True)


def test_guard_band_not_applied_to_nondetects_or_missing_limits():
    """Non-detects and rows without a limit get no uncertainty decision (empty)."""
    scr = pd.DataFrame({"detected": [False, True], "value_ug_L": [np.nan, 5.0], "limit_ug_L": [10.0, np.nan],
                        "uncertainty_ug_L": [1.0, 1.0], "basis": ["single_sample"] * 2})
    assert uncertainty.uncertainty_decision(scr)["uncertainty_decision"].tolist() == ["", ""]
    with pytest.raises(ValueError):
        uncertainty.uncertainty_decision(scr, -1.0)


# --- several uses per site: every table applies, the overview takes the strictest status --------

def test_every_table_of_every_use_applies_and_worst_status_is_the_strictest(tmp_path):
    """A site with drinking_water;freshwater_aquatic gets rows from both tables; worst status follows STATUSES order."""
    lim_dw = tmp_path / "dw.yaml"
    lim_dw.write_text("id: dw\nname: dw\nsource: constructed\nuse: drinking_water\nunit: µg/L\n"
                      "entries:\n  - {analyte: lead, fraction: total, value: 10}\n", encoding="utf-8")
    lim_fw = tmp_path / "fw.yaml"
    lim_fw.write_text("id: fw\nname: fw\nsource: constructed\nuse: freshwater_aquatic\nunit: µg/L\n"
                      "entries:\n  - {analyte: lead, fraction: total, value: 50}\n", encoding="utf-8")
    sites = tmp_path / "sites.csv"
    sites.write_text("site_id,name,latitude,longitude,uses,hardness_mg_L\n"
                     "S1,both,52.0,-3.0,drinking_water;freshwater_aquatic,100\nS2,river,52.1,-3.1,freshwater_aquatic,100\n",
                     encoding="utf-8")
    from tracescreen.io.sites import load_sites

    lim = load_limits([lim_dw, lim_fw])
    res = make_results([{"site_id": "S1", "sampled_at": "2021-01-01", "value": 12.0},
                        {"site_id": "S2", "sampled_at": "2021-01-01", "value": 12.0}])
    out = screen(res, lim, load_sites(sites))
    assert sorted(out.loc[out["site_id"] == "S1", "limit_table"]) == ["dw", "fw"]
    assert out.loc[out["site_id"] == "S2", "limit_table"].tolist() == ["fw"]
    worst = worst_status(out, ["site_id", "sample_id", "analyte"]).set_index("site_id")
    assert worst.loc["S1", "worst_status"] == "exceeds" and worst.loc["S2", "worst_status"] == "meets"
    assert worst.loc["S1", "worst_limit_table"] == "dw" and worst.loc["S1", "n_rows"] == 2
    # documented severity order
    assert STATUSES.index("exceeds") < STATUSES.index("nondetect_inconclusive") < STATUSES.index("meets") \
        < STATUSES.index("nondetect_meets") < STATUSES.index("no_limit") < STATUSES.index("qc_sample")


def test_cli_writes_periods_and_uncertainty_columns(tmp_path, scenario_args, capsys):
    """`tracescreen screen --guard-band 1` on the demo writes periods.csv and states the guard band in the summary."""
    out = tmp_path / "out"
    assert main(["screen", *scenario_args, "--out", str(out), "--guard-band", "1"]) == 0
    text = capsys.readouterr().out
    assert "guard band g = 1 x expanded uncertainty U" in text and "CAUTION" in text
    per = pd.read_csv(out / "periods.csv")
    scr = pd.read_csv(out / "screening.csv", low_memory=False)
    assert {"running_annual_mean", "percentile"} <= set(per["basis"])
    assert set(scr.loc[scr["basis"] == "percentile", "period_id"]) <= set(per["period_id"])
    assert "uncertainty_decision" in scr.columns and scr["uncertainty_decision"].notna().any()
    assert main(["screen", *scenario_args, "--out", str(out), "--guard-band", "-1"]) == 2
