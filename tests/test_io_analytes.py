"""Analyte registry: CAS numbers and name matching."""

import pandas as pd
import pytest

from tracescreen.io import analytes


def test_registry_has_at_least_25_analytes_with_valid_cas():
    """Every registry CAS number passes the CAS check-digit rule (CAS Registry Number format)."""
    reg = analytes.registry()
    assert len(reg) >= 25
    for a in reg:
        assert analytes.cas_check_digit_ok(a.cas), a


@pytest.mark.parametrize("cas, ok", [("7440-38-2", True), ("7439-92-1", True), ("7440-38-3", False),
                                     ("18540-29-9", True), ("7440382", False)])
def test_cas_check_digit(cas, ok):
    """Arsenic 7440-38-2, lead 7439-92-1, chromium(VI) 18540-29-9 (CAS registry; from memory, check digits verified)."""
    assert analytes.cas_check_digit_ok(cas) is ok


@pytest.mark.parametrize("label, name, fraction", [
    ("Arsenic", "arsenic", None), ("AS", "arsenic", None), ("7440-38-2", "arsenic", None),
    ("Lead, dissolved", "lead", "dissolved"), ("Dissolved Pb", "lead", "dissolved"),
    ("Pb (filtered)", "lead", "dissolved"), ("Total Recoverable Zinc", "zinc", "total"),
    ("Chromium (VI)", "chromium(vi)", None), ("Hexavalent chromium", "chromium(vi)", None),
    ("Cr VI, dissolved", "chromium(vi)", "dissolved"), ("aluminum", "aluminium", None),
    ("Iron (Fe)", "iron", None), ("Mercury", "mercury", None), ("  copper  ", "copper", None),
])
def test_match_names_symbols_cas_and_fraction(label, name, fraction):
    """Names, symbols and CAS numbers match case-insensitively; fraction words set the fraction (common practice)."""
    assert analytes.match_one(label) == (name, fraction)


def test_unknown_and_conflicting_labels():
    """Unknown names give None; a label naming both fractions is a conflict (with the analyte it
    names, so that the loader rejects a conflicting metal but sets aside "Solids, Total Dissolved")."""
    assert analytes.match_one("Unobtainium") == (None, None)
    assert analytes.match_one("Dissolved total lead") == ("lead", "conflict")
    assert analytes.match_one("Solids, Total Dissolved") == (None, "conflict")


def test_vectorised_matching():
    """match_analytes maps a column in one pass over its distinct labels."""
    names, fr = analytes.match_analytes(pd.Series(["Pb", "Zinc, total", "xyz", None]))
    assert names.tolist() == ["lead", "zinc", None, None]
    assert fr.tolist() == [None, "total", None, None]
