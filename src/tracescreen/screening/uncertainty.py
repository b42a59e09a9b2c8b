"""Measurement uncertainty in the decision: a guard band beside each status (a per-run option).

Following the Eurachem/CITAC guide [Eurachem2021]_, a guard band g = f x U (U the result's expanded
uncertainty, f stated by the user, 1 by default) splits each side of the limit into a zone where
the decision holds beyond the uncertainty and a zone where it does not:
``exceeds_beyond_uncertainty`` (x - g > L), ``exceeds_within_uncertainty`` (L < x <= L + g),
``meets_within_uncertainty`` (L - g < x <= L), ``meets_beyond_uncertainty`` (x + g <= L).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import REL_TOL

UNCERTAINTY_DECISIONS = (
    "exceeds_beyond_uncertainty", "exceeds_within_uncertainty", "meets_within_uncertainty",
    "meets_beyond_uncertainty", "uncertainty_not_given",
)


def uncertainty_decision(screened: pd.DataFrame, guard_band_factor: float = 1.0) -> pd.DataFrame:
    """Add ``guard_band_ug_L`` and ``uncertainty_decision`` beside each detected result's status.

    Parameters
    ----------
    screened : DataFrame
        Screening rows (needs ``detected, value_ug_L, limit_ug_L, uncertainty_ug_L, basis``).
    guard_band_factor : float
        f in g = f x U, U the expanded uncertainty as reported (usually k = 2, about 95 %).

    Returns
    -------
    DataFrame
        A copy with the two columns; rows that are non-detects, period statistics or without a
        limit get an empty decision (not applicable).

    References
    ----------
    [Eurachem2021]_ (docs/references.md)
    """
    if not np.isfinite(guard_band_factor) or guard_band_factor < 0:
        raise ValueError("the guard band factor must be a number >= 0")
    x = screened["value_ug_L"].to_numpy(dtype=float)
    lim = screened["limit_ug_L"].to_numpy(dtype=float)
    g = guard_band_factor * screened["uncertainty_ug_L"].to_numpy(dtype=float)
    applies = (screened["detected"].to_numpy(dtype=bool) & ~np.isnan(lim)
               & (screened["basis"] == "single_sample").to_numpy())
    tol = lim * REL_TOL
    with np.errstate(invalid="ignore"):
        decision = np.select(
            [np.isnan(g), x - g > lim + tol, x > lim + tol, x + g <= lim + tol],
            ["uncertainty_not_given", "exceeds_beyond_uncertainty", "exceeds_within_uncertainty",
             "meets_beyond_uncertainty"],
            "meets_within_uncertainty").astype(object)
    decision[~applies] = ""
    out = screened.copy()
    out["guard_band_ug_L"] = np.where(applies, g, np.nan)
    out["uncertainty_decision"] = decision
    return out
