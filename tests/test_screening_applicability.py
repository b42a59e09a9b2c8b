"""Which entries apply on a date: published limits that change on a known day (tracescreen.screening.applicability)."""

from __future__ import annotations

from pathlib import Path

import pytest
from flag_frames import results as make_results

from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen

LIMITS_DIR = Path(__file__).resolve().parents[1] / "limits"


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
