"""Outlier tests for background data: Dixon's test (n <= 25) and Rosner's test (n >= 20).

The Unified Guidance screens background for outliers before a limit is computed, with Dixon's
test for small samples and Rosner's generalised test for larger ones, on the scale on which the
data look normal (often the logarithms) (USEPA 2009, ch. 12 [usepa2009]_). A flagged value is
*reported*, never removed here: the guidance removes a value only when an error is documented.

Dixon's ratios (Dixon 1953 [dixon1953]_), for the largest value ``x(n)`` of the sorted sample:
``r10 = (x(n) - x(n-1)) / (x(n) - x(1))`` (n 3-7), ``r11 = (x(n) - x(n-1)) / (x(n) - x(2))`` (8-10),
``r21 = (x(n) - x(n-2)) / (x(n) - x(2))`` (11-13), ``r22 = (x(n) - x(n-2)) / (x(n) - x(3))`` (14-25).
Critical values: :data:`DIXON_CRITICAL` (upper 5 % and 1 % points; from memory of Dixon's table,
checked against a seeded simulation in ``tests/test_background_outliers.py``).

Rosner's test (Rosner 1983 [rosner1983]_) removes the most extreme value ``i = 1..k`` times and
compares ``R_i = max|x - mean| / sd`` of what remains with
``lambda_i = (n - i) t / sqrt((n - i - 1 + t^2)(n - i + 1))``, ``t`` the
``1 - alpha / (2(n - i + 1))`` point of Student's t with ``n - i - 1`` degrees of freedom; the
number of outliers is the largest ``i`` with ``R_i > lambda_i``.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 12.
.. [dixon1953] Dixon, W.J. (1953). Processing data for outliers. Biometrics 9: 74-89.
.. [rosner1983] Rosner, B. (1983). Percentage points for a generalized ESD many-outlier
   procedure. Technometrics 25: 165-172.
"""

from __future__ import annotations

import numpy as np
from scipy import stats

#: Dixon critical values {alpha: {n: critical ratio}} for the largest value (one-sided).
DIXON_CRITICAL: dict[float, dict[int, float]] = {
    0.05: {3: .941, 4: .765, 5: .642, 6: .560, 7: .507, 8: .554, 9: .512, 10: .477, 11: .576,
           12: .546, 13: .521, 14: .546, 15: .525, 16: .507, 17: .490, 18: .475, 19: .462,
           20: .450, 21: .440, 22: .430, 23: .421, 24: .413, 25: .406},
    0.01: {3: .988, 4: .889, 5: .780, 6: .698, 7: .637, 8: .683, 9: .635, 10: .597, 11: .679,
           12: .642, 13: .615, 14: .641, 15: .616, 16: .595, 17: .577, 18: .561, 19: .547,
           20: .535, 21: .524, 22: .514, 23: .505, 24: .497, 25: .489},
}


def dixon_ratio(values) -> float:
    """Dixon's ratio for the largest value (NaN outside 3 <= n <= 25 or for a constant sample)."""
    x = np.sort(np.asarray(values, dtype=float))
    n = len(x)
    if not 3 <= n <= 25:
        return float("nan")
    top, low = (2, 1) if n <= 7 else (2, 2) if n <= 10 else (3, 2) if n <= 13 else (3, 3)
    span = x[-1] - x[low - 1]
    return float((x[-1] - x[-top]) / span) if span > 0 else float("nan")


def dixon_test(values, alpha: float = 0.05) -> dict:
    """Dixon's test of the largest value.

    Returns
    -------
    dict
        ``statistic``, ``critical`` and ``outlier`` (bool), ``value`` (the largest value).
    """
    if alpha not in DIXON_CRITICAL:
        raise ValueError(f"Dixon critical values are tabulated for alpha {sorted(DIXON_CRITICAL)}")
    x = np.asarray(values, dtype=float)
    q = dixon_ratio(x)
    crit = DIXON_CRITICAL[alpha].get(len(x), float("nan"))
    return {"statistic": q, "critical": crit, "outlier": bool(q > crit) if np.isfinite(q) else False,
            "value": float(np.max(x)) if len(x) else float("nan")}


def rosner_lambda(n: int, i: int, alpha: float = 0.05) -> float:
    """Rosner's critical value for the ``i``-th removal (i = 1, 2, ...) from ``n`` values.

    >>> round(rosner_lambda(25, 1), 6)   # Unified Guidance Example 12-4
    2.821681
    """
    p = 1.0 - alpha / (2.0 * (n - i + 1))
    t = stats.t.ppf(p, n - i - 1)
    return float((n - i) * t / np.sqrt((n - i - 1 + t * t) * (n - i + 1)))


def rosner_test(values, k: int, alpha: float = 0.05) -> dict:
    """Rosner's generalised test for up to ``k`` outliers.

    Returns
    -------
    dict
        ``statistics`` and ``critical`` (lists, one per removal), ``n_outliers`` and ``outliers``
        (the values found, most extreme first).
    """
    x = np.asarray(values, dtype=float)
    n = len(x)
    k = int(min(k, max(n - 3, 0)))
    left = x.copy()
    stat, crit, removed = [], [], []
    for i in range(1, k + 1):
        sd = left.std(ddof=1)
        dev = np.abs(left - left.mean())
        j = int(np.argmax(dev))
        stat.append(float(dev[j] / sd) if sd > 0 else float("nan"))
        crit.append(rosner_lambda(n, i, alpha))
        removed.append(float(left[j]))
        left = np.delete(left, j)
    hits = [i for i in range(len(stat)) if np.isfinite(stat[i]) and stat[i] > crit[i]]
    n_out = hits[-1] + 1 if hits else 0
    return {"statistics": stat, "critical": crit, "n_outliers": n_out, "outliers": removed[:n_out]}


def screen_outliers(values, alpha: float = 0.05) -> dict:
    """The guidance's choice of test by sample size: Dixon for n <= 25 (largest value), Rosner for
    n > 25 (up to 10 % of the values, at most 5).

    Returns
    -------
    dict
        ``test`` ("dixon", "rosner" or "" when n < 3), ``statistic``, ``critical``, ``outliers``
        (list of values flagged).
    """
    x = np.asarray(values, dtype=float)
    x = x[np.isfinite(x)]
    if len(x) < 3 or np.ptp(x) == 0:
        return {"test": "", "statistic": float("nan"), "critical": float("nan"), "outliers": []}
    if len(x) <= 25:
        d = dixon_test(x, alpha if alpha in DIXON_CRITICAL else 0.05)
        return {"test": "dixon", "statistic": d["statistic"], "critical": d["critical"],
                "outliers": [d["value"]] if d["outlier"] else []}
    r = rosner_test(x, k=max(1, min(5, len(x) // 10)), alpha=alpha)
    return {"test": "rosner", "statistic": r["statistics"][0], "critical": r["critical"][0],
            "outliers": r["outliers"]}
