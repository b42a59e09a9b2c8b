"""Confidence limits of a well's statistic, for comparison with a fixed standard.

In compliance/assessment monitoring a well exceeds a standard when the **lower** confidence limit
of its statistic is above it; in corrective action a well meets it when the **upper** limit is
below it (USEPA 2009, ch. 21-22 [usepa2009]_). The statistics here, each for many series at once:

* mean, normal data: ``x̄ ± t(level; n - 1) s / sqrt(n)``;
* geometric mean (lognormal data): the same on logarithms, back-transformed (Example 21-2);
* arithmetic mean, lognormal data: Land's method (:mod:`.land`; Example 21-3);
* mean with non-detects: Kaplan-Meier mean and standard error (:func:`kaplan_meier_mean_se`)
  with Student's t (Helsel 2012 [helsel2012]_);
* upper percentile ``p``, normal (or lognormal) data: ``x̄ + s t'(level; n - 1, z_p sqrt(n)) / sqrt(n)``
  for the upper limit, with ``1 - level`` for the lower limit (Example 21-4);
* median or any percentile, non-parametric: an order statistic with the *achieved* confidence
  from the binomial distribution (Examples 21-5, 21-6);
* a trend line: the least-squares line with a simultaneous band
  ``ŷ(t) ± sqrt(2 F(1 - 2 alpha; 2, n - 2)) s_e sqrt(1/n + (t - t̄)² / Sxx)``, whose one-sided
  (1 - alpha) limits are the guidance's (Example 21-7 as corrected in the 2010 errata).

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 21-22; errata EPA
   530/R-09-007a (2010).
.. [helsel2012] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab and
   R, 2nd ed. Wiley. Ch. 6 (Kaplan-Meier mean and its standard error).
"""

from __future__ import annotations

import numpy as np
from scipy import stats


def _side_level(level: float, side: str) -> float:
    if side not in ("lower", "upper"):
        raise ValueError("side must be 'lower' or 'upper'")
    return level if side == "upper" else 1.0 - level


def mean_limit_normal(mean, sd, n, level: float, side: str) -> np.ndarray:
    """One-sided ``level`` confidence limit of a normal mean (``side`` 'lower' or 'upper').

    >>> round(float(mean_limit_normal(23.1, 4.93491, 4, 0.95, "lower")), 3)   # Example 21-1
    17.293
    """
    n = np.asarray(n, dtype=float)
    q = stats.t.ppf(_side_level(level, side), np.where(n >= 2, n - 1, np.nan))
    return np.asarray(mean, dtype=float) + q * np.asarray(sd, dtype=float) / np.sqrt(n)


def percentile_limit_normal(mean, sd, n, p: float, level: float, side: str) -> np.ndarray:
    """One-sided ``level`` confidence limit of the ``p`` percentile of a normal distribution.

    >>> round(float(percentile_limit_normal(23.1, 4.93491, 4, 0.95, 0.99, "upper")), 2)  # Ex. 21-4
    67.93
    """
    n = np.asarray(n, dtype=float)
    ok = n >= 2
    with np.errstate(invalid="ignore"):
        k = stats.nct.ppf(_side_level(level, side), np.where(ok, n - 1, 1),
                          stats.norm.ppf(p) * np.sqrt(n)) / np.sqrt(n)
    return np.where(ok, np.asarray(mean, dtype=float) + k * np.asarray(sd, dtype=float), np.nan)


def order_statistic_rank(n, p: float, level: float, side: str) -> tuple[np.ndarray, np.ndarray]:
    """Rank (1 = smallest) of the order statistic that bounds the ``p`` quantile, and the
    confidence it achieves.

    A lower limit at rank ``r`` holds with confidence ``P(Binomial(n, p) >= r)``, an upper limit
    at rank ``u`` with ``P(Binomial(n, p) <= u - 1)``. Confidence moves in steps, so the rank whose
    achieved confidence is closest to ``level`` is taken (the higher one on a tie), as in the
    guidance's Examples 21-5 and 21-6; the achieved confidence is always reported with it.

    >>> r, c = order_statistic_rank(16, 0.5, 0.99, "lower")   # Example 21-5: 4th smallest, 98.94 %
    >>> int(r[0]), round(float(c[0]), 4)
    (4, 0.9894)
    """
    n = np.atleast_1d(np.asarray(n, dtype=int))
    width = max(int(n.max()) if n.size else 0, 1)
    ranks = np.arange(1, width + 1)[None, :]
    valid = ranks <= n[:, None]
    if side == "lower":
        conf = stats.binom.sf(ranks - 1, n[:, None], p)        # P(X >= r)
    elif side == "upper":
        conf = stats.binom.cdf(ranks - 1, n[:, None], p)       # P(X <= u - 1)
    else:
        raise ValueError("side must be 'lower' or 'upper'")
    distance = np.where(valid, np.abs(conf - level) - 1e-12 * conf, np.inf)
    rank = np.argmin(distance, axis=1) + 1
    achieved = np.take_along_axis(conf, (rank - 1)[:, None], axis=1)[:, 0]
    return np.where(n >= 1, rank, 0), np.where(n >= 1, achieved, np.nan)


def kaplan_meier_mean_se(values, nondetect) -> tuple[float, float]:
    """Kaplan-Meier mean of a left-censored series and its standard error.

    The mean is the flipped Kaplan-Meier estimate (mass below the smallest detect placed at the
    smallest value, as :func:`tracescreen.statistics.censored.kaplan_meier`). The variance is the
    Greenwood-type variance of the restricted mean (Klein and Moeschberger 2003, §4.5), computed
    on the flipped scale, times ``n / (n - 1)`` so that with no non-detects the standard error is
    exactly ``s / sqrt(n)`` (Helsel 2012, ch. 6).

    Returns
    -------
    (mean, se) : floats [units of ``values``]
    """
    x = np.asarray(values, dtype=float)
    nd = np.asarray(nondetect, dtype=bool)
    n = len(x)
    if n < 2 or (~nd).sum() == 0:
        return float("nan"), float("nan")
    det = np.unique(x[~nd])                                   # distinct detected values, ascending
    d = np.array([np.sum((x == v) & ~nd) for v in det], float)  # detects at each value
    b = np.array([np.sum(x <= v) for v in det], float)          # at risk: observations <= value
    factor = np.where(b > 0, 1.0 - d / b, 1.0)
    # F(x) just below det[j] = product of factors at and above det[j]
    below = np.cumprod(factor[::-1])[::-1]
    at = np.append(below[1:], 1.0)                              # F(det[j])
    mass = at - below
    lowest = min(det[0], x.min())
    mean = float(np.sum(mass * det) + below[0] * lowest)
    # area between the lowest value and det[j] under F (step function, value at[i] on [det[i], det[i+1]))
    widths = np.diff(np.append(lowest, det))                     # det[j] - previous point
    steps = np.append(below[0], at[:-1])                        # F on each of those intervals
    area = np.cumsum(widths * steps)                            # ∫_{lowest}^{det[j]} F(x) dx
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(b > d, area ** 2 * d / (b * (b - d)), 0.0)
    var = float(np.sum(terms)) * n / (n - 1)
    return mean, float(np.sqrt(var))


def trend_band(t, y, t0, level: float) -> dict:
    """Least-squares trend line and its one-sided ``level`` confidence limits at times ``t0``.

    Parameters
    ----------
    t, y : array_like
        Sampling times (e.g. decimal years) and values of one series (no non-detects).
    t0 : array_like
        Times at which to give the band.
    level : float
        One-sided confidence (0.95 gives the limits of a two-sided 90 % simultaneous band).

    Returns
    -------
    dict
        ``slope``, ``intercept``, ``fit``, ``lower``, ``upper`` (arrays at ``t0``), ``multiplier``.
    """
    t = np.asarray(t, dtype=float)
    y = np.asarray(y, dtype=float)
    t0 = np.atleast_1d(np.asarray(t0, dtype=float))
    n = len(t)
    nan = np.full(t0.shape, np.nan)
    if n < 3 or np.ptp(t) == 0:
        return {"slope": np.nan, "intercept": np.nan, "fit": nan, "lower": nan, "upper": nan,
                "multiplier": np.nan}
    tbar = t.mean()
    sxx = np.sum((t - tbar) ** 2)
    slope = np.sum((t - tbar) * (y - y.mean())) / sxx
    intercept = y.mean() - slope * tbar
    resid = y - (intercept + slope * t)
    se = np.sqrt(np.sum(resid ** 2) / (n - 2))
    mult = np.sqrt(2.0 * stats.f.ppf(1.0 - 2.0 * (1.0 - level), 2, n - 2))
    fit = intercept + slope * t0
    half = mult * se * np.sqrt(1.0 / n + (t0 - tbar) ** 2 / sxx)
    return {"slope": slope, "intercept": intercept, "fit": fit, "lower": fit - half,
            "upper": fit + half, "multiplier": mult}


def alpha_for_power(n: int, shift_sd: float, power: float) -> float:
    """False positive rate at which a one-sided t-test on ``n`` values reaches ``power`` against a
    shift of ``shift_sd`` standard deviations (the guidance's way of choosing alpha for a
    confidence limit in compliance monitoring, USEPA 2009, §22.1.2 and Example 22-1).

    >>> round(alpha_for_power(4, 1.0, 0.8), 5)
    0.16334
    """
    from scipy import optimize

    def gap(a):
        crit = stats.t.ppf(1.0 - a, n - 1)
        return stats.nct.sf(crit, n - 1, shift_sd * np.sqrt(n)) - power

    return float(optimize.brentq(gap, 1e-12, 1 - 1e-12, xtol=1e-14))
