"""The multiplier kappa of a parametric prediction limit ``x̄ + kappa * s`` with retesting.

Computed, not read from tables: kappa solves the Davis and McNichols (1987) integral
[davis1987]_ for a retest plan (:mod:`.plans`) over ``r`` future evaluations, as the Unified
Guidance's Appendix D tables do [usepa2009]_ (ch. 19). With ``V`` the chance that one future
compared value (a single result, or the mean of ``w`` results) lies below the limit given the
background mean and standard deviation, and ``g`` the chance that one evaluation passes,

    1 - confidence = ∫₀¹ r·g(v)^(r-1)·g'(v) · T̄(√n·kappa; ν, √n·[Φ⁻¹(v)/√w + Δ]) dv,

where ``T̄(·; ν, δ)`` is the survival function of the non-central t distribution with ``ν``
degrees of freedom (``n - 1``, or more when the standard deviation is pooled across wells) and
non-centrality ``δ``, and ``Δ = 0`` (the false positive rate; ``Δ > 0`` in standard-deviation units
gives the power). The integral is taken in ``z = Φ⁻¹(v)`` by composite Gauss-Legendre quadrature
(agrees with adaptive quadrature to 1e-12), and kappa by Brent's method on its logarithm.

A design computes kappa once per distinct (n, ν, plan, confidence, r) -- never per well
(:func:`kappa_table`).

References
----------
.. [davis1987] Davis, C.B. and McNichols, R.J. (1987). One-sided intervals for at least p of m
   observations from a normal population on each of r future occasions. Technometrics 29: 359-370.
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 19 and Appendix D.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pandas as pd
from scipy import optimize, special, stats

from .plans import RetestPlan


def _nodes(half_width: float = 10.0, panels: int = 40, per_panel: int = 16):
    x, w = np.polynomial.legendre.leggauss(per_panel)
    edges = np.linspace(-half_width, half_width, panels + 1)
    a, b = edges[:-1, None], edges[1:, None]
    z = (a + (b - a) * (x + 1) / 2).ravel()
    return z, ((b - a) / 2 * w).ravel()


_Z, _W = _nodes()
_V = special.ndtr(_Z)
_PHI = np.exp(-_Z ** 2 / 2) / np.sqrt(2 * np.pi)


def _weights(plan: RetestPlan, r: int) -> np.ndarray:
    """Quadrature weights r·g(v)^(r-1)·g'(v)·φ(z) at the nodes."""
    g = plan.one_occasion()
    return _W * r * g(_V) ** (r - 1) * g.deriv()(_V) * _PHI


def failure_probability(kappa: float, n: int, df: float, plan: RetestPlan, r: int,
                        shift_sd: float = 0.0) -> float:
    """Probability that at least one of ``r`` evaluations fails at one well.

    Parameters
    ----------
    kappa : float
        Multiplier of the background standard deviation.
    n : int
        Background values behind the mean.
    df : float
        Degrees of freedom of the standard deviation (``n - 1``, or the pooled value).
    plan : RetestPlan
        Retest plan (its ``order`` is the number of results averaged per compared value).
    r : int
        Evaluations covered.
    shift_sd : float
        True increase of the well over background, in standard deviations [-]; 0 gives the false
        positive rate, > 0 the power.
    """
    delta = np.sqrt(n) * (_Z / np.sqrt(plan.order) + shift_sd)
    sf = stats.nct.sf(np.sqrt(n) * kappa, df, delta)
    return float(np.sum(_weights(plan, r) * sf))


@lru_cache(maxsize=4096)
def kappa(n: int, df: float, plan: RetestPlan, confidence: float, r: int) -> float:
    """Kappa such that a plan's evaluations pass ``r`` times with probability ``confidence``.

    Parameters
    ----------
    n : int
        Background sample size (>= 2).
    df : float
        Degrees of freedom of the standard deviation (>= 1).
    plan : RetestPlan
    confidence : float
        Per-test confidence, e.g. from :func:`per_test_confidence` [-].
    r : int
        Future evaluations covered (evaluations per year in the guidance's design).

    Examples
    --------
    Unified Guidance Example 19-1 (n = 25; 10 constituents x 50 wells; 2 evaluations a year;
    SWFPR 10 %), 1-of-3 plan:

    >>> round(kappa(25, 24, RetestPlan("k-of-m", 1, 3), 0.9 ** (1 / 500), 2), 4)
    2.0144
    """
    if n < 2 or df < 1:
        return float("nan")
    target = np.log1p(-confidence)

    def f(k):
        return np.log(max(failure_probability(k, n, df, plan, r), 1e-300)) - target

    lo, hi = -5.0, 5.0
    while f(hi) > 0:
        hi *= 2
        if hi > 1e4:
            return float("inf")
    while f(lo) < 0:
        lo -= 5
        if lo < -100:
            return float("-inf")
    return float(optimize.brentq(f, lo, hi, xtol=1e-10, rtol=1e-12))


def per_test_confidence(swfpr: float, n_wells: int, n_constituents: int) -> float:
    """Per-test confidence of a parametric design, ``(1 - SWFPR)^(1 / (wells x constituents))``.

    The annual site-wide false positive rate is shared over every well-constituent test; each
    test's limit then covers the year's evaluations (``r``) at that confidence (USEPA 2009,
    ch. 19, Examples 19-1 to 19-4).

    >>> round(per_test_confidence(0.10, 50, 10), 7)
    0.9997893
    """
    return float((1.0 - swfpr) ** (1.0 / (max(n_wells, 1) * max(n_constituents, 1))))


def per_constituent_alpha(swfpr: float, n_constituents: int) -> float:
    """Target false positive rate per constituent of a non-parametric design,
    ``1 - (1 - SWFPR)^(1 / constituents)`` (USEPA 2009, Example 19-5).

    >>> round(per_constituent_alpha(0.10, 5), 8)
    0.02085164
    """
    return float(1.0 - (1.0 - swfpr) ** (1.0 / max(n_constituents, 1)))


def kappa_table(designs: pd.DataFrame, plan: RetestPlan, r: int) -> pd.DataFrame:
    """Kappa, design false positive rate and power for every distinct design row.

    Parameters
    ----------
    designs : DataFrame
        Columns ``n``, ``df``, ``confidence`` (one row per limit to compute; repeats allowed).
    plan : RetestPlan
    r : int
        Evaluations per year.

    Returns
    -------
    DataFrame
        ``designs`` plus ``kappa``, ``power_3sd`` and ``power_4sd`` (probability that a well
        3 or 4 standard deviations above background fails an evaluation within the year), each
        computed once per distinct ``(n, df, confidence)``.
    """
    keys = ["n", "df", "confidence"]
    if designs.empty:
        return designs.assign(kappa=pd.Series(dtype=float), power_3sd=pd.Series(dtype=float),
                              power_4sd=pd.Series(dtype=float))
    distinct = designs[keys].drop_duplicates().reset_index(drop=True)
    ks, p3, p4 = [], [], []
    for n, df, conf in distinct.itertuples(index=False):  # a handful of distinct designs
        kv = kappa(int(n), float(df), plan, float(conf), int(r)) if n >= 2 and df >= 1 else np.nan
        ks.append(kv)
        ok = np.isfinite(kv)
        p3.append(failure_probability(kv, int(n), float(df), plan, r, 3.0) if ok else np.nan)
        p4.append(failure_probability(kv, int(n), float(df), plan, r, 4.0) if ok else np.nan)
    distinct = distinct.assign(kappa=ks, power_3sd=p3, power_4sd=p4)
    return designs.merge(distinct, on=keys, how="left")


def bonferroni_factor(n, future: int, confidence: float, order: int = 1) -> np.ndarray:
    """Multiplier for one test of ``future`` values (or means of ``order``) without retesting,
    by Bonferroni: ``t(1 - alpha / future; n - 1) sqrt(1/order + 1/n)`` (USEPA 2009, ch. 18).

    >>> round(27.51667 + float(bonferroni_factor(12, 4, 0.95)) * 17.10119, 2)   # Example 18-1
    73.67
    """
    n = np.asarray(n, dtype=float)
    q = stats.t.ppf(1.0 - (1.0 - confidence) / future, np.where(n >= 2, n - 1, np.nan))
    return q * np.sqrt(1.0 / order + 1.0 / n)
