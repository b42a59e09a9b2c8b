"""Hardness by calculation and the order in which a sample's hardness is chosen."""

import numpy as np
import pandas as pd
import pytest

from tracescreen.screening import hardness
from tracescreen.screening.hardness import hardness_from_calcium_magnesium, sample_hardness


def test_standard_methods_2340b_example():
    """Ca 40 mg/L, Mg 12 mg/L -> 2.497*40 + 4.118*12 = 149.3 mg/L as CaCO3 (Standard Methods 2340 B)."""
    assert hardness_from_calcium_magnesium(40, 12) == pytest.approx(149.296)


def test_coefficients_are_the_published_molar_mass_ratios():
    """The code's coefficients are Standard Methods 2340 B's printed 2.497 and 4.118, which are the
    molar-mass ratios M(CaCO3)/M(Ca) and M(CaCO3)/M(Mg) to three decimals (IUPAC standard atomic
    weights, abridged: Ca 40.078, Mg 24.305, C 12.011, O 15.999; from memory)."""
    caco3 = 40.078 + 12.011 + 3 * 15.999
    assert hardness.CA_TO_CACO3 == 2.497 == round(caco3 / 40.078, 3)
    assert hardness.MG_TO_CACO3 == 4.118 == round(caco3 / 24.305, 3)


def _results(rows):
    cols = ["site_id", "sample_id", "analyte", "fraction", "value_ug_L", "detected", "hardness_mg_L"]
    return pd.DataFrame(rows, columns=cols)


def test_preference_order_own_then_ca_mg_then_site_default():
    """Own hardness first, then Ca/Mg of the same sample, then the site default, else none (README.md#input-sites)."""
    r = _results([
        ("S1", "A", "zinc", "dissolved", 10.0, True, 55.0),
        ("S1", "A", "calcium", "total", 40000.0, True, np.nan),
        ("S1", "B", "zinc", "dissolved", 10.0, True, np.nan),
        ("S1", "B", "calcium", "total", 40000.0, True, np.nan),
        ("S1", "B", "magnesium", "total", 12000.0, True, np.nan),
        ("S1", "C", "zinc", "dissolved", 10.0, True, np.nan),
        ("S2", "D", "zinc", "dissolved", 10.0, True, np.nan),
    ])
    sites = pd.DataFrame({"site_id": ["S1", "S2"], "hardness_mg_L": [80.0, np.nan]})
    h = sample_hardness(r, sites)
    assert h["hardness_origin"].tolist() == ["sample", "sample", "calcium_magnesium", "calcium_magnesium",
                                             "calcium_magnesium", "site_default", "none"]
    assert h["hardness_used_mg_L"].iloc[2] == pytest.approx(149.296)
    assert h["hardness_used_mg_L"].iloc[5] == 80.0 and np.isnan(h["hardness_used_mg_L"].iloc[6])
