"""Concentration units: from the unit text a laboratory reports to a factor to µg/L.

Everything inside tracescreen is held in micrograms per litre (µg/L). Conversion factors come
from pint and are computed once per distinct unit string (never per row).

Parts-per notation (``ppm``, ``ppb``, ``ppt``) is read as mass per volume for dilute water, whose
density is taken as 1 kg/L: ppm = mg/L, ppb = µg/L, ppt = ng/L (parts per *trillion*, not per
thousand). This is the usual convention for trace metals in fresh water; it does not hold for
brines or sea water reported on a mass basis.

A unit may name the species the value is expressed as: ``ug/L as Cr``, ``mg/l as N``,
``mg/L as CaCO3``, ``mg/l CaCO3`` (USGS NWIS and WQX write units so). :func:`split_species`
separates the two; the loader accepts a metal's own element symbol (``ug/L as Cr`` for chromium)
and CaCO3 for hardness, and rejects any other species (a result "as CrO4" would need a molar-mass
conversion that is not guessed).

References
----------
.. [1] Bureau International des Poids et Mesures (2019). The International System of Units (SI),
   9th edition: the prefixes micro (10^-6), nano (10^-9), milli (10^-3).
"""

from __future__ import annotations

import functools
import re
import sys

import numpy as np
import pandas as pd

TARGET_UNIT = "microgram / liter"

#: Parts-per notation for dilute water, read as mass per volume (density 1 kg/L).
PARTS_PER = {"ppm": "mg/L", "ppb": "ug/L", "ppt": "ng/L"}

_MICRO = ("\u00b5", "\u03bc")  # MICRO SIGN and GREEK SMALL LETTER MU: both seen in lab files


_SPECIES_RE = re.compile(r"^\s*(?P<unit>.*?\S)\s*(?:\bas\s+(?P<sp>[A-Za-z][A-Za-z0-9()]*)|\s(?P<caco3>CaCO3))\s*$",
                         re.IGNORECASE)


def split_species(units: pd.Series) -> tuple[pd.Series, pd.Series]:
    """Unit text without its species suffix, and the species ("" if none), per distinct value.

    >>> u, sp = split_species(pd.Series(["ug/L as Cr", "mg/l CaCO3", "mg/L"]))
    >>> list(u), list(sp)
    (['ug/L', 'mg/l', 'mg/L'], ['Cr', 'CaCO3', ''])
    """
    s = units.fillna("").astype(str)
    codes, uniq = pd.factorize(s)
    m = pd.Series(np.asarray(uniq, dtype=object), dtype=object).str.extract(_SPECIES_RE)
    has = m["unit"].notna().to_numpy()
    unit = np.where(has, m["unit"].fillna("").to_numpy(dtype=object), np.asarray(uniq, dtype=object))
    sp = np.where(has, m["sp"].fillna(m["caco3"]).fillna("").to_numpy(dtype=object), "")
    if not len(uniq):
        return s.copy(), pd.Series("", index=s.index, dtype=object)
    return (pd.Series(unit[codes], index=s.index, dtype=object),
            pd.Series(sp[codes], index=s.index, dtype=object))


def _pint():
    """pint, imported without dask when the run has not imported dask itself.

    ``pint.compat`` imports ``dask.base`` whenever dask is installed (tracescreen installs it for
    ``--engine dask``), only so that a Quantity may wrap a dask array, which tracescreen never gives
    it: 0.06-0.1 s of every run's start. With ``sys.modules["dask"]`` None while pint is imported,
    ``importlib.util.find_spec("dask")`` is None to pint; the entry is removed at once, so that dask
    itself still imports (a run on a cluster imports dask before this).
    """
    if "pint" in sys.modules or "dask" in sys.modules:
        import pint

        return pint
    sys.modules["dask"] = None
    try:
        import pint
    finally:
        del sys.modules["dask"]
    return pint


@functools.lru_cache(maxsize=1)
def _registry():
    """Pint's default registry; its parsed definitions are cached on disk (pint's own cache)."""
    pint = _pint()
    try:
        return pint.UnitRegistry(cache_folder=":auto:")
    except OSError:  # no writable cache folder: parse the definitions each time
        return pint.UnitRegistry()


def normalise_unit_text(text: str) -> str:
    """Fold the spellings of one unit together: micro sign or Greek mu -> ``u``, case, spaces.

    >>> normalise_unit_text(" \u03bcg/l ")
    'ug/L'
    """
    s = str(text).strip()
    for mu in _MICRO:
        s = s.replace(mu, "u")
    s = re.sub(r"\s+", "", s).lower()
    s = s.replace("litre", "l").replace("liter", "l")
    if s in PARTS_PER:
        return PARTS_PER[s]
    # g/m3, mg/dm3: exponents written without **
    s = re.sub(r"([a-z])([23])$", r"\1**\2", s)
    if s.endswith("/l"):
        s = s[:-2] + "/L"
    return s


#: Longer text is not a unit (the longest we read, ``micrograms per liter as CaCO3``, has 31 characters).
MAX_UNIT_TEXT = 64


@functools.lru_cache(maxsize=4096)
def factor_to_ug_per_L(unit_text: str) -> float | None:
    """Factor that turns a concentration in ``unit_text`` into µg/L, or None if not a concentration.

    Parameters
    ----------
    unit_text : str
        The unit as reported, e.g. ``"mg/L"``, ``"µg/L"``, ``"ppb"``, ``"g/m3"``.

    Returns
    -------
    float or None
        Multiply a value in ``unit_text`` by this to get µg/L [µg/L per unit]. Rounded to 12
        significant digits so that exact decimal factors (1000, 0.001) carry no binary residue.
    """
    if len(unit_text) > MAX_UNIT_TEXT:  # pint's parser slows with the square of the text's length
        return None
    s = normalise_unit_text(unit_text)
    if not s:
        return None
    ureg = _registry()
    try:
        q = ureg.Quantity(1.0, s)
        if q.dimensionality != ureg.Quantity(1.0, TARGET_UNIT).dimensionality:
            return None
        f = float(q.to(TARGET_UNIT).magnitude)
    except Exception:  # pint raises several error types for unknown text
        return None
    if not np.isfinite(f) or f <= 0:
        return None
    return float(f"{f:.12g}")


def factors_for(units: pd.Series) -> np.ndarray:
    """Vectorised :func:`factor_to_ug_per_L`: one pint call per distinct unit string.

    Returns a float array aligned with ``units``; NaN where the unit is not a known concentration.
    """
    codes, uniques = pd.factorize(units, use_na_sentinel=True)
    table = np.array(
        [np.nan if (f := factor_to_ug_per_L(u)) is None else f for u in uniques], dtype=float
    )
    out = np.full(len(codes), np.nan)
    ok = codes >= 0
    out[ok] = table[codes[ok]]
    return out


def clean_decimal(values: np.ndarray, digits: int = 12) -> np.ndarray:
    """Round to ``digits`` significant digits to drop binary residue of unit conversion.

    ``0.007 * 1000`` is ``7.000000000000001`` in binary floating point; this returns ``7.0``.
    """
    v = np.asarray(values, dtype=float)
    out = v.copy()
    with np.errstate(divide="ignore", invalid="ignore"):
        mag = np.floor(np.log10(np.abs(v)))
    # only where the scale stays a finite double (|v| from about 1e-290 to 1e290; others are kept as they are)
    nz = np.isfinite(v) & (v != 0) & (np.abs(mag) < 290)
    scale = 10.0 ** (digits - 1 - mag[nz])
    out[nz] = np.round(v[nz] * scale) / scale
    return out
