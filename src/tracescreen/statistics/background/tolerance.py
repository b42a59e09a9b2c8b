"""Upper tolerance limits of background: background threshold values and background-based
standards.

An upper tolerance limit (UTL) is a value that a stated share (the *coverage*) of the background
population lies below, with a stated confidence (USEPA 2009, ch. 17 [usepa2009]_):

* parametric, normal data: ``UTL = x̄ + K s`` with
  ``K = t'(confidence; n - 1, z_coverage sqrt(n)) / sqrt(n)``, ``t'`` the quantile of the
  non-central t distribution; lognormal data: the same on logarithms, back-transformed;
* non-parametric: an order statistic (the maximum by default). The share of the population below
  the ``j``-th largest of ``n`` values is ``Beta(n + 1 - j, j)`` (Wilks 1941 [wilks1941]_), so at a
  given confidence the *achieved coverage* is that distribution's ``1 - confidence`` quantile, and
  at a given coverage the *achieved confidence* is ``1 - F_Beta(coverage)``.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 17 (Examples 17-3, 17-4).
.. [wilks1941] Wilks, S.S. (1941). Determination of sample sizes for setting tolerance limits.
   Annals of Mathematical Statistics 12: 91-96.
"""

from __future__ import annotations

import numpy as np
from scipy import stats


def normal_tolerance_factor(n, coverage: float, confidence: float) -> np.ndarray:
    """One-sided tolerance factor K for normal data (vectorised over ``n``).

    >>> round(float(normal_tolerance_factor(8, 0.95, 0.95)), 4)
    3.1873
    """
    n = np.asarray(n, dtype=float)
    with np.errstate(invalid="ignore"):
        k = stats.nct.ppf(confidence, n - 1, stats.norm.ppf(coverage) * np.sqrt(n)) / np.sqrt(n)
    return np.where(n >= 2, k, np.nan)


def parametric_utl(mean, sd, n, coverage: float, confidence: float, log_scale=False) -> np.ndarray:
    """Upper tolerance limit ``x̄ + K s`` (on logarithms and back-transformed where ``log_scale``).

    Parameters
    ----------
    mean, sd : array_like
        Background mean and standard deviation (of the logarithms where ``log_scale``) [µg/L or ln µg/L].
    n : array_like
        Background sample sizes.
    coverage, confidence : float
        e.g. 0.95 and 0.95.
    log_scale : bool or array of bool
    """
    k = normal_tolerance_factor(n, coverage, confidence)
    limit = np.asarray(mean, dtype=float) + k * np.asarray(sd, dtype=float)
    return np.where(log_scale, np.exp(limit), limit)


def nonparametric_coverage(n, rank_from_top, confidence: float) -> np.ndarray:
    """Coverage achieved at ``confidence`` by the ``rank_from_top``-th largest of ``n`` values.

    >>> round(float(nonparametric_coverage(24, 1, 0.95)), 4)   # 0.05 ** (1 / 24)
    0.8827
    """
    n = np.asarray(n, dtype=float)
    j = np.asarray(rank_from_top, dtype=float)
    ok = (j >= 1) & (j <= n)
    with np.errstate(invalid="ignore"):
        cov = stats.beta.ppf(1.0 - confidence, np.where(ok, n + 1 - j, 1), np.where(ok, j, 1))
    return np.where(ok, cov, np.nan)


def nonparametric_confidence(n, rank_from_top, coverage: float) -> np.ndarray:
    """Confidence that at least ``coverage`` of the population lies below the
    ``rank_from_top``-th largest of ``n`` values."""
    n = np.asarray(n, dtype=float)
    j = np.asarray(rank_from_top, dtype=float)
    ok = (j >= 1) & (j <= n)
    conf = stats.beta.sf(coverage, np.where(ok, n + 1 - j, 1), np.where(ok, j, 1))
    return np.where(ok, conf, np.nan)
