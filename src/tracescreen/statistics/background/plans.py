"""Retesting plans for prediction limits and how a sequence of results is decided under them.

A *plan* says how many compared values an evaluation may take and when it passes (USEPA 2009,
ch. 19 [usepa2009]_):

``k-of-m``
    the evaluation passes as soon as ``k`` of up to ``m`` compared values are within the limit
    (1-of-2: an initial value and one resample; 1-of-3: up to two resamples).
``california``
    passes if the first value is within the limit, or else if all ``m - 1`` resamples are.
``modified-california``
    passes if the first value is within the limit, or else if 2 of the next 3 are (``m = 4``).

Each compared value is a single result (``order = 1``) or the mean (parametric limits) or median
(non-parametric limits) of ``order`` consecutive results ("future means/medians of order 2 or 3").

:meth:`RetestPlan.one_occasion` gives the probability that one evaluation passes as a polynomial
in ``p``, the probability that one compared value is within the limit; the design integrals of
:mod:`.kappa` and :mod:`.nonparametric` are built on it. :func:`decide` applies a plan to many
sequences at once (one step per compared value, vectorised across sequences).

References
----------
.. [usepa2009] USEPA (2009). Statistical Analysis of Groundwater Monitoring Data at RCRA
   Facilities: Unified Guidance. EPA 530-R-09-007 (errata EPA 530/R-09-007a, 2010). Ch. 19.
.. [davis1987] Davis, C.B. and McNichols, R.J. (1987). One-sided intervals for at least p of m
   observations from a normal population on each of r future occasions. Technometrics 29: 359-370.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from math import comb

import numpy as np
from numpy.polynomial import Polynomial

#: Rule names, in the order the command line lists them.
RULES = ("k-of-m", "california", "modified-california")

#: Plan texts offered by the command line (any ``k-of-m`` text is accepted as well).
PLAN_CHOICES = ("1-of-1", "1-of-2", "1-of-3", "1-of-4", "modified-california", "california-of-3")

_K_OF_M = re.compile(r"^\s*(\d+)\s*-?\s*of\s*-?\s*(\d+)\s*$", re.IGNORECASE)
_CALIFORNIA = re.compile(r"^\s*california(?:\s*-?\s*of\s*-?\s*(\d+))?\s*$", re.IGNORECASE)
_MODIFIED = re.compile(r"^\s*modified\s*[-_ ]?\s*california\s*$", re.IGNORECASE)


def _at_least(k: int, m: int) -> Polynomial:
    """P(at least k of m independent values pass) as a polynomial in the single-value probability p."""
    p, q = Polynomial([0.0, 1.0]), Polynomial([1.0, -1.0])
    out = Polynomial([0.0])
    for j in range(k, m + 1):
        out = out + comb(m, j) * p ** j * q ** (m - j)
    return out


@dataclass(frozen=True)
class RetestPlan:
    """A retesting plan.

    Attributes
    ----------
    rule : str
        One of :data:`RULES`.
    k, m : int
        ``k-of-m``: passes with ``k`` of up to ``m`` compared values within the limit. California:
        ``m`` values at most (first + ``m - 1`` resamples). Modified California: ``k = 2, m = 4``.
    order : int
        Results per compared value (1: single results; 2 or 3: their mean or median).
    """

    rule: str = "k-of-m"
    k: int = 1
    m: int = 2
    order: int = 1

    def __post_init__(self):
        if self.rule not in RULES:
            raise ValueError(f"unknown retest rule {self.rule!r}; expected one of {', '.join(RULES)}")
        if self.order < 1 or self.m < 1 or not 1 <= self.k <= self.m:
            raise ValueError(f"retest plan {self.label}: need 1 <= k <= m and order >= 1")
        if self.rule == "modified-california" and (self.k, self.m) != (2, 4):
            raise ValueError("the modified California plan is k = 2, m = 4")
        if self.rule == "california" and self.m < 2:
            raise ValueError("the California plan needs m >= 2 (a first value and resamples)")

    @property
    def label(self) -> str:
        """The retest plan in words (e.g. ``1-of-2``)."""
        base = {"k-of-m": f"{self.k}-of-{self.m}", "california": f"california-of-{self.m}",
                "modified-california": "modified-california"}[self.rule]
        return base if self.order == 1 else f"{base}, order {self.order}"

    @property
    def results_per_evaluation(self) -> int:
        """Largest number of results one evaluation can take."""
        return self.m * self.order

    def one_occasion(self) -> Polynomial:
        """P(an evaluation passes) as a polynomial in p = P(one compared value is within the limit)."""
        p = Polynomial([0.0, 1.0])
        if self.rule == "k-of-m":
            return _at_least(self.k, self.m)
        if self.rule == "california":
            return p + (1 - p) * p ** (self.m - 1)
        return p + (1 - p) * _at_least(2, 3)

    def with_order(self, order: int) -> "RetestPlan":
        """The same retest rule with another ``order`` (see :class:`RetestPlan`)."""
        return RetestPlan(self.rule, self.k, self.m, order)


def parse_plan(text: str, order: int = 1) -> RetestPlan:
    """Read a plan text: ``1-of-2``, ``2 of 3``, ``california-of-3``, ``modified-california``.

    >>> parse_plan("1-of-3").label
    '1-of-3'
    >>> parse_plan("modified california", order=2).label
    'modified-california, order 2'
    """
    t = str(text)
    if (mm := _K_OF_M.match(t)):
        return RetestPlan("k-of-m", int(mm.group(1)), int(mm.group(2)), order)
    if _MODIFIED.match(t):
        return RetestPlan("modified-california", 2, 4, order)
    if (mm := _CALIFORNIA.match(t)):
        return RetestPlan("california", 1, int(mm.group(1) or 3), order)
    raise ValueError(f"unknown retest plan {text!r}: write k-of-m (1-of-2, 1-of-3, ...), "
                     "california-of-M or modified-california")


# --------------------------------------------------------------------------- deciding sequences

#: Outcome codes of :func:`decide`.
UNDECIDED, PASSED, FAILED = 0, 1, 2


def decide(rule: np.ndarray, k: np.ndarray, m: np.ndarray, first_failed: np.ndarray,
           n_pass: np.ndarray, n_fail: np.ndarray) -> np.ndarray:
    """Outcome of evaluations so far, for many evaluations at once.

    Parameters
    ----------
    rule : array of int
        Index into :data:`RULES` per evaluation.
    k, m : array of int
        The plan's ``k`` and ``m`` per evaluation.
    first_failed : array of bool
        The evaluation's first compared value was above the limit.
    n_pass, n_fail : array of int
        Compared values within / above the limit so far (the first included).

    Returns
    -------
    array of int
        :data:`UNDECIDED`, :data:`PASSED` or :data:`FAILED`.

    >>> decide(np.array([0, 0]), np.array([1, 1]), np.array([2, 2]), np.array([True, True]),
    ...        np.array([1, 0]), np.array([1, 2])).tolist()
    [1, 2]
    """
    rule = np.asarray(rule)
    first_passed = (n_pass + n_fail > 0) & ~first_failed
    kofm = rule == 0
    cal = rule == 1
    passed = np.where(kofm, n_pass >= k,
                      np.where(cal, first_passed | (first_failed & (n_pass >= m - 1)),
                               first_passed | (first_failed & (n_pass >= 2))))
    failed = np.where(kofm, n_fail >= m - k + 1,
                      np.where(cal, first_failed & (n_fail >= 2), first_failed & (n_fail >= 3)))
    return np.where(passed, PASSED, np.where(failed, FAILED, UNDECIDED))
