"""Kaplan-Meier estimates for left-censored concentrations (non-detects), small and self-contained.

Used by :mod:`tracescreen.periods` when a limit table states ``nondetect_rule: kaplan_meier`` for its
period means and percentiles. It works on one small sample at a time (a 12-month window or one
monitoring period at one site) and is written so the censored-statistics module can take it over.

The estimator (Helsel 2012, ch. 6) for left-censored data, without flipping the data:

    F(x) = prod over detected values x_(j) > x of (1 - d_j / b_j)

where d_j is the number of detects equal to x_(j) and b_j the number of observations "at or below"
x_(j): detects <= x_(j) and non-detects whose detection limit is <= x_(j). F is the estimated
probability of a concentration <= x.

Mean: sum of x_(j) times the jump of F at x_(j). The mass F(x_(1)^-) below the smallest detect has no
location; the usual (Efron) correction puts it at the smallest detection limit below x_(1), which
biases the mean high (Helsel 2012). ``below_lowest="zero"`` puts it at zero instead (a lower bound).

References
----------
.. [1] Helsel, D. R. (2012). Statistics for Censored Environmental Data Using Minitab and R,
   2nd ed. Wiley. Chapter 6 (Kaplan-Meier).
.. [2] Kaplan, E. L. and Meier, P. (1958). Nonparametric estimation from incomplete observations.
   Journal of the American Statistical Association 53(282): 457-481.
"""

from __future__ import annotations

import numpy as np


def left_censored_cdf(values, nondetect):
    """Kaplan-Meier distribution function of left-censored data at its distinct detected values.

    Parameters
    ----------
    values : array_like
        Detected value, or the detection limit for a non-detect [any concentration unit].
    nondetect : array_like of bool
        True where the value is a detection limit ("<value").

    Returns
    -------
    x : numpy.ndarray
        Distinct detected values, ascending.
    cdf : numpy.ndarray
        Estimated P(X <= x) at each of them (the last is 1).
    below : float
        Estimated P(X < x[0]), the mass below the smallest detect (0 when no non-detect lies below it).
    """
    v = np.asarray(values, dtype=float)
    nd = np.asarray(nondetect, dtype=bool)
    det = np.sort(v[~nd])
    if det.size == 0:
        return det, det, np.nan
    x, d = np.unique(det, return_counts=True)
    # b_j: detects <= x_j plus non-detects with DL <= x_j
    b = np.searchsorted(det, x, side="right") + np.searchsorted(np.sort(v[nd]), x, side="right")
    factor = 1.0 - d / b
    # F(x_j) = product of factors for detected values strictly above x_j
    tail = np.cumprod(factor[::-1])[::-1]  # tail[j] = prod_{k >= j} factor_k
    cdf = np.append(tail[1:], 1.0)
    below = float(tail[0])
    return x, cdf, below


def kaplan_meier_mean(values, nondetect, below_lowest: str = "efron") -> float:
    """Kaplan-Meier mean of left-censored data.

    Parameters
    ----------
    values, nondetect : array_like
        As in :func:`left_censored_cdf`.
    below_lowest : {"efron", "zero"}
        Where the mass below the smallest detect goes: at the smallest detection limit below it
        ("efron", the usual correction, biased high) or at zero (a lower bound).

    Returns
    -------
    float
        The mean, in the unit of `values`; NaN when every value is a non-detect.
    """
    v = np.asarray(values, dtype=float)
    nd = np.asarray(nondetect, dtype=bool)
    x, cdf, below = left_censored_cdf(v, nd)
    if x.size == 0:
        return float("nan")
    jumps = np.diff(np.concatenate([[below], cdf]))
    mean = float(np.sum(x * jumps))
    if below > 0:
        if below_lowest == "efron":
            mean += below * float(np.min(v[nd & (v < x[0])]))
        elif below_lowest != "zero":
            raise ValueError(f"below_lowest must be 'efron' or 'zero', not {below_lowest!r}")
    return mean


def kaplan_meier_quantile(values, nondetect, p: float) -> tuple[float, bool]:
    """Kaplan-Meier p-quantile (0 < p <= 1): the smallest detected x with F(x) >= p.

    Returns
    -------
    (float, bool)
        The quantile and whether it is censored: when p falls in the mass below the smallest detect,
        the quantile is only known to be below the smallest detection limit there, returned as
        that limit with ``True`` (report it as "<value"). NaN when every value is a non-detect.
    """
    v = np.asarray(values, dtype=float)
    nd = np.asarray(nondetect, dtype=bool)
    x, cdf, below = left_censored_cdf(v, nd)
    if x.size == 0:
        return float("nan"), True
    if p <= below:
        return float(np.min(v[nd & (v < x[0])])), True
    i = int(np.searchsorted(cdf, p - 1e-12, side="left"))
    return float(x[min(i, x.size - 1)]), False
