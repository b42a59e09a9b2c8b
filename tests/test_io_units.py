"""Unit conversion to µg/L, checked against pint's own conversions."""

import numpy as np
import pandas as pd
import pint
import pytest

from tracescreen.io import units

UREG = pint.UnitRegistry()


@pytest.mark.parametrize("text, pint_unit", [
    ("mg/L", "milligram/liter"), ("µg/L", "microgram/liter"), ("μg/L", "microgram/liter"),
    ("ug/l", "microgram/liter"), ("UG/L", "microgram/liter"), ("ng/L", "nanogram/liter"),
    ("g/m3", "gram/meter**3"), ("mg/dm3", "milligram/decimeter**3"),
])
def test_factor_matches_pint(text, pint_unit):
    """Factor to µg/L equals pint's conversion of the same unit (pint reference library)."""
    expected = UREG.Quantity(1.0, pint_unit).to("microgram/liter").magnitude
    assert units.factor_to_ug_per_L(text) == pytest.approx(expected, rel=1e-12)


def test_micro_sign_and_greek_mu_are_the_same_unit():
    """U+00B5 MICRO SIGN and U+03BC GREEK SMALL LETTER MU both mean micro (Unicode; common practice)."""
    assert "\u00b5g/L" != "\u03bcg/L"
    assert units.factor_to_ug_per_L("\u00b5g/L") == units.factor_to_ug_per_L("\u03bcg/L") == 1.0


@pytest.mark.parametrize("text, factor", [("ppm", 1000.0), ("ppb", 1.0), ("ppt", 0.001)])
def test_parts_per_read_as_mass_per_volume(text, factor):
    """ppm = mg/L, ppb = µg/L, ppt = ng/L for dilute water of density 1 kg/L (common practice)."""
    assert units.factor_to_ug_per_L(text) == factor


@pytest.mark.parametrize("text", ["mg/kg", "%", "", "mol/L", "NTU", "banana"])
def test_non_concentration_units_are_refused(text):
    """Units that are not mass per volume give None (the row is then rejected)."""
    assert units.factor_to_ug_per_L(text) is None


def test_factors_computed_once_per_distinct_string(monkeypatch):
    """factors_for calls the pint lookup once per distinct unit text, not per row."""
    calls = []
    real = units.factor_to_ug_per_L.__wrapped__

    def counting(t):
        calls.append(t)
        return real(t)

    monkeypatch.setattr(units, "factor_to_ug_per_L", counting)
    out = units.factors_for(pd.Series(["mg/L", "ug/L"] * 5000))
    assert sorted(calls) == ["mg/L", "ug/L"]
    assert out[:2].tolist() == [1000.0, 1.0]


def test_clean_decimal_removes_binary_residue():
    """0.1 x 3 is 0.30000000000000004 and 1.1 x 3 is 3.3000000000000003 in IEEE 754 doubles; cleaned."""
    raw = np.array([0.1 * 3, 1.1 * 3, 1e-4 * 1000])
    assert raw[0] != 0.3 and raw[1] != 3.3
    assert units.clean_decimal(raw).tolist() == [0.3, 3.3, 0.1]


def test_pint_is_imported_without_dask():
    """A run's unit conversions import pint but not dask (installed for --engine dask; pint.compat imports it
    whenever it is installed, 0.06-0.1 s of every run's start); dask itself still imports afterwards."""
    import subprocess
    import sys

    code = ("import sys; from tracescreen.io.units import factor_to_ug_per_L; f = factor_to_ug_per_L('mg/L'); "
            "before = 'dask' in sys.modules; import dask; print(f, before, 'pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["1000.0", "False", "True"]  # 1 mg/L = 1000 µg/L (SI prefixes [BIPM 2019])
