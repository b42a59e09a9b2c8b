"""Every shipped limit value equals its published value.

The published values, with the document (table, section, annex) and where each was confirmed or that
it is from memory, are in ``tests/published_values.py``. The hardness formulas are checked against the
criteria the documents print for hardness 100 mg/L as CaCO3, rounded to two significant figures as
published (40 CFR part 132 Tables 1-2, footnote b: "shall be rounded to two significant digits").
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import yaml

from published_values import HARDNESS_RANGE, PUBLISHED_TABLES, UG_L_PER_UNIT, Published

LIMITS_DIR = Path(__file__).resolve().parents[1] / "limits"
TABLE_IDS = sorted(PUBLISHED_TABLES)


def _raw(table_id: str) -> dict:
    file_name, _ = PUBLISHED_TABLES[table_id]
    return yaml.safe_load((LIMITS_DIR / file_name).read_text(encoding="utf-8"))


def _iso(value) -> str:
    return "" if value is None else str(value)


def _key(analyte, fraction, duration, basis, effective_from, effective_to):
    return (analyte, fraction, duration or "", basis or "single_sample", _iso(effective_from), _iso(effective_to))


def _pub_key(p: Published):
    return _key(p.analyte, p.fraction, p.duration, p.basis, p.effective_from, p.effective_to)


def _entry_key(e: dict):
    return _key(e["analyte"], e["fraction"], e.get("duration"), e.get("basis"),
                e.get("effective_from"), e.get("effective_to"))


def round_sig(x: float, digits: int = 2) -> float:
    """Round to `digits` significant figures, halves away from zero (as criteria tables are printed)."""
    if x == 0:
        return 0.0
    exponent = math.floor(math.log10(abs(x)))
    scale = 10.0 ** (digits - 1 - exponent)
    return math.copysign(math.floor(abs(x) * scale + 0.5), x) / scale


def published_formula(p: Published, hardness: float) -> float:
    """Criterion from the published coefficients: exp(m ln H + b) x CF, H clamped to the range, CF <= 1."""
    h = min(max(hardness, HARDNESS_RANGE[0]), HARDNESS_RANGE[1])
    if p.cf is not None:
        cf = p.cf
    else:
        cf = min(1.0, p.cf_intercept + p.cf_ln_slope * math.log(h))
    return math.exp(p.m * math.log(h) + p.b) * cf


@pytest.mark.parametrize("table_id", TABLE_IDS)
def test_table_file_has_exactly_the_published_entries(table_id):
    """Each shipped table lists exactly the entries of its published document (published_values.py), no more, no less."""
    raw = _raw(table_id)
    assert raw["id"] == table_id
    shipped = sorted(_entry_key(e) for e in raw["entries"])
    published = sorted(_pub_key(p) for p in PUBLISHED_TABLES[table_id][1])
    assert shipped == published


@pytest.mark.parametrize("table_id", TABLE_IDS)
def test_table_file_values_equal_published_values(table_id):
    """Each fixed value in the YAML equals the published value named in published_values.py (unit converted exactly)."""
    raw = _raw(table_id)
    table_factor = UG_L_PER_UNIT[raw["unit"]]
    by_key = {_entry_key(e): e for e in raw["entries"]}
    for p in PUBLISHED_TABLES[table_id][1]:
        e = by_key[_pub_key(p)]
        if p.value is None:
            assert "value" not in e, p
            continue
        shipped_ug_l = float(e["value"]) * table_factor
        published_ug_l = p.value * UG_L_PER_UNIT[p.unit]
        assert shipped_ug_l == pytest.approx(published_ug_l, rel=1e-12), (p.analyte, p.document, p.status)


def test_hardness_formula_coefficients_equal_published():
    """The NRWQC formula coefficients in the YAML equal 40 CFR 132 Tables 1-2 / 131.46 / state copies (published_values.py)."""
    raw = _raw("us_epa_nrwqc_freshwater_aquatic_life")
    by_key = {_entry_key(e): e for e in raw["entries"]}
    formulas = [p for p in PUBLISHED_TABLES["us_epa_nrwqc_freshwater_aquatic_life"][1] if p.value is None]
    assert len(formulas) == 13  # Cd, Cr(III), Cu, Pb, Ni, Zn acute+chronic; Ag acute
    for p in formulas:
        e = by_key[_pub_key(p)]
        hf = e["hardness_formula"]
        assert hf["m"] == p.m and hf["b"] == p.b, p
        if p.cf is not None:
            assert hf["cf"] == p.cf, p
        else:
            assert hf["cf"] == {"intercept": p.cf_intercept, "ln_hardness": p.cf_ln_slope}, p
        assert tuple(float(x) for x in e["hardness_range"]) == HARDNESS_RANGE, p


@pytest.mark.parametrize(
    "p",
    [p for p in PUBLISHED_TABLES["us_epa_nrwqc_freshwater_aquatic_life"][1] if p.value is None],
    ids=lambda p: f"{p.analyte}-{p.duration}",
)
def test_published_coefficients_reproduce_published_criterion_at_hardness_100(p):
    """The published coefficients give the printed criterion at H = 100 mg/L CaCO3, rounded to 2 significant figures."""
    assert round_sig(published_formula(p, 100.0), 2) == pytest.approx(p.at_100, rel=1e-12), p.at_100_source


def test_cadmium_acute_at_hardness_25_and_50():
    """Cadmium CMC (2016) is 0.49 µg/L at H = 25 and 0.94 at H = 50 (Colorado Reg. 31 calculator, same coefficients)."""
    cd = next(p for p in PUBLISHED_TABLES["us_epa_nrwqc_freshwater_aquatic_life"][1]
              if p.analyte == "cadmium" and p.duration == "acute")
    assert round_sig(published_formula(cd, 25.0)) == 0.49
    assert round_sig(published_formula(cd, 50.0)) == 0.94


def test_round_sig_matches_printed_rounding():
    """The 2-significant-figure rounding used here reproduces printed values (common practice: halves round up)."""
    assert round_sig(569.9) == 570 and round_sig(74.1) == 74 and round_sig(8.96) == 9.0
    assert round_sig(0.7183) == 0.72 and round_sig(2.5167) == 2.5 and round_sig(0.125) == 0.13
    assert np.isclose(round_sig(1.794), 1.8)
