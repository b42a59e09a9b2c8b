"""Analyte registry and name matching.

Labs name the same metal in many ways: ``Lead``, ``Pb``, ``7439-92-1``, ``Lead, dissolved``,
``Dissolved Pb``, ``Pb (filtered)``. :func:`match_analytes` turns such text into the canonical
registry name and, where the text carries it, the fraction.

The registry (``data/analytes.yaml``) lists each analyte's canonical name, element symbol, CAS
Registry Number and synonyms. Matching is case-insensitive and ignores spacing and punctuation
around the name.

References
----------
.. [1] CAS (Chemical Abstracts Service). CAS Registry Number check-digit rule: the last digit equals
   the sum of each other digit times its position counted from the right, modulo 10.
"""

from __future__ import annotations

import functools
import re
from dataclasses import dataclass
from importlib import resources

import numpy as np
import pandas as pd
import yaml

from tracescreen._internal.yamlfiles import SAFE_LOADER

#: Words that put a fraction into an analyte name, and the fraction they mean.
#: dissolved: passed through a 0.45 µm filter before acidification (common practice);
#: total: unfiltered, total recoverable.
FRACTION_WORDS = {
    "dissolved": "dissolved",
    "diss": "dissolved",
    "filtered": "dissolved",
    "soluble": "dissolved",
    "total recoverable": "total",
    "total": "total",
    "tot": "total",
    "unfiltered": "total",
    "recoverable": "total",
}
_FRACTION_RE = re.compile(
    r"(?<![a-z])(" + "|".join(sorted(map(re.escape, FRACTION_WORDS), key=len, reverse=True)) + r")\.?(?![a-z])"
)


@dataclass(frozen=True)
class Analyte:
    """One analyte of the registry: canonical name, symbol, CAS number and the names it goes by."""
    name: str
    symbol: str
    cas: str
    synonyms: tuple[str, ...]


def _key(text: str) -> str:
    """Matching key: lower case, no spacing or punctuation other than parentheses and + signs."""
    s = str(text).strip().lower()
    s = re.sub(r"[\s,;:_\-./]+", "", s)
    return s.replace("()", "")


def cas_check_digit_ok(cas: str) -> bool:
    """True if ``cas`` is well formed and its check digit is right (CAS rule, see References)."""
    m = re.fullmatch(r"(\d{2,7})-(\d{2})-(\d)", str(cas).strip())
    if not m:
        return False
    digits = (m.group(1) + m.group(2))[::-1]
    total = sum((i + 1) * int(d) for i, d in enumerate(digits))
    return total % 10 == int(m.group(3))


@functools.lru_cache(maxsize=1)
def registry() -> tuple[Analyte, ...]:
    """The shipped analyte registry."""
    text = resources.files("tracescreen").joinpath("data/analytes.yaml").read_text("utf-8")
    rows = yaml.load(text, Loader=SAFE_LOADER)["analytes"]
    return tuple(
        Analyte(r["name"], r["symbol"], str(r["cas"]), tuple(r.get("synonyms") or ())) for r in rows
    )


@functools.lru_cache(maxsize=1)
def _lookup() -> dict[str, str]:
    table: dict[str, str] = {}
    for a in registry():
        for label in (a.name, a.symbol, a.cas, *a.synonyms):
            table[_key(label)] = a.name
    return table


@functools.lru_cache(maxsize=1)
def symbol_of() -> dict[str, str]:
    """Canonical name -> element symbol (``chromium(vi)`` -> ``Cr``: a species is reported as its
    element, e.g. NWIS "micrograms per liter as Cr")."""
    return {a.name: re.sub(r"\(.*\)$", "", a.symbol) for a in registry()}


def canonical_names() -> list[str]:
    """Canonical names of every registry analyte."""
    return [a.name for a in registry()]


def split_fraction(text: str) -> tuple[str, str | None]:
    """Remove fraction words from an analyte label: (the rest in lower case, the fraction or None).

    Two different fraction words give ``"conflict"``.

    >>> split_fraction("Lead, dissolved")
    ('lead', 'dissolved')
    >>> split_fraction("Total Recoverable Zinc")
    ('zinc', 'total')
    >>> split_fraction("Arsenic")
    ('Arsenic', None)
    """
    s = str(text).strip()
    low = s.lower()
    found = {FRACTION_WORDS[m.group(1)] for m in _FRACTION_RE.finditer(low)}
    if not found:
        return s, None
    rest = _FRACTION_RE.sub(" ", low)
    rest = re.sub(r"\(\s*\)", " ", rest)
    rest = re.sub(r"^[\s,;:\-]+|[\s,;:\-]+$", "", rest)
    return rest, found.pop() if len(found) == 1 else "conflict"


@functools.lru_cache(maxsize=8192)
def match_one(text: str) -> tuple[str | None, str | None]:
    """Canonical analyte name and fraction (or None) for one label; name None if unknown. A label
    that names both fractions ("Solids, Total Dissolved") gives fraction ``"conflict"`` (with the
    name of what is left, if that is an analyte)."""
    if text is None or str(text).strip() == "":
        return None, None
    table = _lookup()
    whole = table.get(_key(text))
    if whole is not None:
        return whole, None
    rest, fraction = split_fraction(text)
    name = table.get(_key(rest))
    if name is None:
        # "Iron (Fe)", "Arsenic (As) [7440-38-2]": drop bracketed symbols or CAS numbers
        bare = re.sub(r"[\(\[][^)\]]*[\)\]]", " ", str(rest))
        if bare.strip() and bare != rest:
            name = table.get(_key(bare))
    return name, fraction


def match_analytes(labels: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """Vectorised :func:`match_one` (one lookup per distinct label).

    Returns
    -------
    names, fractions : numpy object arrays
        Canonical name (None if unknown) and the fraction carried in the label (None if none,
        ``"conflict"`` if the label names both).
    """
    codes, uniques = pd.factorize(labels, use_na_sentinel=True)
    pairs = [match_one(u) for u in uniques]
    names = np.array([p[0] for p in pairs] + [None], dtype=object)
    fracs = np.array([p[1] for p in pairs] + [None], dtype=object)
    codes = np.where(codes < 0, len(pairs), codes)
    return names[codes], fracs[codes]


def resolve(label: str) -> str | None:
    """Canonical name for a label (name, symbol, CAS or synonym), ignoring any fraction word."""
    name, _ = match_one(label)
    return name
