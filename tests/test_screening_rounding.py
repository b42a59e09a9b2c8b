"""Rounding a result to the limit's significant figures before the comparison (tracescreen.screening.rounding)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from flag_frames import results as make_results

from tracescreen.limits.load import LimitTableError, load_limits
from tracescreen.screening import rounding
from tracescreen.screening.screen import screen

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


# --- measurement uncertainty decision rule ---------------------------------------------------------


# --- several uses per site: every table applies, the overview takes the strictest status --------


