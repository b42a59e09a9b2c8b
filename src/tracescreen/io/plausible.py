"""Numbers and dates a water sample can have: bounds that turn impossible values into rejected rows.

A result cell of ``1e309`` is infinity in floating point, and a hardness of 0 makes a hardness
formula's limit zero (every result "exceeds") or infinite (every result "meets"): values like these
must never reach screening. Each bound below is physical, not a judgement about the water:

* a concentration is finite and at most :data:`MAX_CONCENTRATION_UG_L` (1,000 g/L, the mass of a
  litre of water: no solute in a water sample reaches it; brines hold about 350 g/L of salts);
* hardness is above 0 and at most :data:`MAX_HARDNESS_MG_L` mg/L as CaCO3 (seawater is about
  6,600 mg/L; hardness-dependent criteria stop at 400 mg/L, [EPA-NRWQC]_ Appendix B);
* pH is from 0 to 14, temperature from -5 to 100 °C, dissolved organic carbon from 0 to 1,000 mg/L
  (common practice for natural and waste waters).

Dates: see :func:`tracescreen.io.cells.parse_dates_in_range` (earliest plausible date, an option).
"""

from __future__ import annotations

import numpy as np

#: Highest concentration a water sample can hold [µg/L] (1,000 g/L).
MAX_CONCENTRATION_UG_L = 1e9
#: Highest hardness accepted [mg/L as CaCO3].
MAX_HARDNESS_MG_L = 100_000.0
#: Accepted ranges of the other inputs of computed limits: (low, high) inclusive.
INPUT_RANGES = {"ph": (0.0, 14.0), "temperature_C": (-5.0, 100.0), "doc_mg_L": (0.0, 1000.0)}


def concentration_problem(values: np.ndarray, what: str) -> tuple[np.ndarray, str]:
    """Rows whose concentration [µg/L] is infinite or impossibly high (NaN, not given, is fine)."""
    with np.errstate(over="ignore", invalid="ignore"):
        v = np.asarray(values, dtype=float)
    bad = np.isinf(v) | (np.abs(np.nan_to_num(v, posinf=0, neginf=0)) > MAX_CONCENTRATION_UG_L)
    return bad, (f"{what} is not a finite concentration of at most 1,000 g/L (a number out of range, "
                 "e.g. 1e309, or a unit mistake)")


def hardness_problem(values: np.ndarray) -> tuple[np.ndarray, str]:
    """Rows whose hardness [mg/L as CaCO3] is 0, negative, infinite or above :data:`MAX_HARDNESS_MG_L`."""
    v = np.asarray(values, dtype=float)
    bad = ~np.isnan(v) & ~((v > 0) & (v <= MAX_HARDNESS_MG_L))
    return bad, f"hardness must be above 0 and at most {MAX_HARDNESS_MG_L:,.0f} mg/L as CaCO3"


def input_problem(name: str, values: np.ndarray) -> tuple[np.ndarray, str]:
    """Rows whose pH, temperature or DOC is outside :data:`INPUT_RANGES` (NaN, not given, is fine)."""
    lo, hi = INPUT_RANGES[name]
    v = np.asarray(values, dtype=float)
    bad = ~np.isnan(v) & ~((v >= lo) & (v <= hi))
    return bad, f"{name} must be from {lo:g} to {hi:g}"
