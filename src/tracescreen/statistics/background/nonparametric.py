"""Non-parametric prediction limits: an order statistic of background and its achieved
false positive rate.

For data with many non-detects, or no distribution that fits, the limit is a high order
statistic of the pooled background: the largest (``rank_from_top = 1``), second largest, ...
Its false positive rate is not chosen but *achieved*, and depends on the background size ``n``,
the plan and the number of comparisons made against the same limit. If ``U = F(limit)`` (the
share of the background distribution below the limit), ``U ~ Beta(n + 1 - j, j)`` for the
``j``-th largest value, and the chance that all ``r`` comparisons pass is

    confidence = E[ g(h(U))^r ],

where ``h`` is the chance that one compared value passes (``h(u) = u`` for single results; the
chance that the median of ``order`` results is below the limit otherwise) and ``g`` the plan's
chance that an evaluation passes (:meth:`.plans.RetestPlan.one_occasion`). Because every well of
a constituent is compared with the same limit, ``r`` = compliance wells x evaluations per year,
and the target is the per-constituent rate (USEPA 2009, ch. 19 and Example 19-5 [usepa2009]_;
Davis and McNichols 1999 [davis1999]_).

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 19.
.. [davis1999] Davis, C.B. and McNichols, R.J. (1999). Simultaneous nonparametric prediction
   limits. Technometrics 41: 89-101.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy import integrate, stats

from .plans import RetestPlan, _at_least


@lru_cache(maxsize=4096)
def achieved_confidence(n: int, rank_from_top: int, plan: RetestPlan, r: int) -> float:
    """Chance that ``r`` evaluations under ``plan`` all pass against the ``rank_from_top``-th
    largest of ``n`` background values, when every value comes from the background distribution.

    Examples
    --------
    Unified Guidance Example 19-5 (n = 20 background mercury values, 10 wells, 1 evaluation a
    year; limit = the maximum), 1-of-3 plan: achieved false positive rate 0.0055.

    >>> round(1 - achieved_confidence(20, 1, RetestPlan("k-of-m", 1, 3), 10), 4)
    0.0055
    """
    if not 1 <= rank_from_top <= n:
        return float("nan")
    u = n + 1 - rank_from_top
    one = plan.one_occasion()
    per_value = _at_least((plan.order + 1) // 2 if plan.order > 1 else 1, plan.order)
    dist = stats.beta(u, n + 1 - u)

    def f(x):
        return one(per_value(x)) ** r * dist.pdf(x)

    lo, hi = dist.ppf(1e-15), 1.0
    centre = float(dist.mean())
    val, _ = integrate.quad(f, lo, hi, points=[centre], epsabs=0.0, epsrel=1e-11, limit=400)
    return float(min(max(val, 0.0), 1.0))


def choose_rank(n: int, plan: RetestPlan, r: int, target_alpha: float,
                max_rank: int = 3) -> tuple[int, float]:
    """The lowest limit (largest ``rank_from_top`` up to ``max_rank``) whose achieved false positive
    rate is at most ``target_alpha``; the maximum (rank 1) when none is.

    Returns
    -------
    (rank_from_top, achieved_alpha)
    """
    best = (1, 1.0 - achieved_confidence(n, 1, plan, r)) if n >= 1 else (0, float("nan"))
    for j in range(min(max_rank, n), 0, -1):
        a = 1.0 - achieved_confidence(n, j, plan, r)
        if a <= target_alpha:
            return j, a
    return best


@lru_cache(maxsize=1024)
def background_needed(plan: RetestPlan, r: int, target_alpha: float, n_max: int = 2000) -> int:
    """Smallest background size whose maximum meets ``target_alpha`` under ``plan``
    (0 when even ``n_max`` does not)."""
    lo, hi = 1, n_max
    if 1.0 - achieved_confidence(hi, 1, plan, r) > target_alpha:
        return 0
    while lo < hi:
        mid = (lo + hi) // 2
        if 1.0 - achieved_confidence(mid, 1, plan, r) <= target_alpha:
            hi = mid
        else:
            lo = mid + 1
    return lo


def order_statistic(values: np.ndarray, rank_from_top: int) -> float:
    """The ``rank_from_top``-th largest value (NaN when there are fewer values)."""
    v = np.sort(np.asarray(values, dtype=float))
    return float(v[-rank_from_top]) if 1 <= rank_from_top <= len(v) else float("nan")
