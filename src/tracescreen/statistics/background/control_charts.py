"""Intrawell combined Shewhart-CUSUM control charts with retesting.

Each compliance value is standardised with the well's own baseline (background) mean and
standard deviation, ``Z_i = (x_i - x̄_B) / s_B`` (on logarithms for lognormal baselines), and the
upper CUSUM ``S_i = max(0, Z_i - k + S_(i-1))``, ``S_0 = 0``, is kept. A point is *out of control*
when ``S_i > h`` (a slow drift) or ``Z_i > SCL`` (a sudden rise) (USEPA 2009, ch. 20 [usepa2009]_;
Lucas 1982 [lucas1982]_). Defaults ``k = 1``, ``h = 5``, ``SCL = 4.5`` are the guidance's
(``h = 5`` as in Example 20-1; ``k`` and ``SCL`` from memory of ch. 20).

Retesting (our reading of ch. 20): an out-of-control point needs a resample. The resample is
charted *in place of* the point: standardised and added to the CUSUM before the point. If it is
out of control too, the well is confirmed out of control; if not, the point is not confirmed and
the chart continues from the resample. A non-detect is charted at its detection limit (an upper
bound); a non-detect that would be out of control only at that bound is ``inconclusive`` and is
not added to the CUSUM.

The columns of many charts are processed together: the loop runs over positions in time, each
step vectorised across charts.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 20 (Example 20-1).
.. [lucas1982] Lucas, J.M. (1982). Combined Shewhart-CUSUM quality control schemes. Journal of
   Quality Technology 14: 51-59.
"""

from __future__ import annotations

import numpy as np

#: Point statuses, in the order of :data:`STATUS_CODES`.
CHART_STATUSES = ("in_control", "resample_required", "confirmed_out_of_control", "not_confirmed",
                  "inconclusive")
IN, PENDING, CONFIRMED, NOT_CONFIRMED, INCONCLUSIVE = range(5)

#: The guidance's default chart parameters.
DEFAULT_K, DEFAULT_H, DEFAULT_SCL = 1.0, 5.0, 4.5


def shewhart_cusum(values: np.ndarray, nondetect: np.ndarray, valid: np.ndarray,
                   mean: np.ndarray, sd: np.ndarray, *, log_scale=None, k: float = DEFAULT_K,
                   h: float = DEFAULT_H, scl: float = DEFAULT_SCL) -> dict:
    """Chart many compliance series at once.

    Parameters
    ----------
    values : ndarray (g, L)
        Compliance values in time order [µg/L] (detection limit for non-detects); padding anywhere
        ``valid`` is False.
    nondetect, valid : ndarray of bool (g, L)
    mean, sd : ndarray (g,)
        Baseline mean and standard deviation (of the logarithms where ``log_scale``).
    log_scale : ndarray of bool (g,), optional
    k, h, scl : float
        CUSUM reference value, decision interval and Shewhart limit [standard deviations].

    Returns
    -------
    dict of ndarrays (g, L)
        ``z`` (standardised value), ``cusum``, ``status`` (index into :data:`CHART_STATUSES`).
    """
    g, L = values.shape
    log_scale = np.zeros(g, bool) if log_scale is None else np.asarray(log_scale, bool)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.where(log_scale[:, None], np.log(np.where(values > 0, values, np.nan)), values)
        z = (x - mean[:, None]) / sd[:, None]
    cusum = np.full((g, L), np.nan)
    status = np.full((g, L), -1, dtype=np.int8)
    s_before = np.zeros(g)      # CUSUM before the pending point (or current when none pending)
    pending = np.zeros(g, bool)
    for j in range(L):
        ok = valid[:, j] & np.isfinite(z[:, j])
        zj = z[:, j]
        s_new = np.maximum(0.0, zj - k + s_before)
        out = ok & ((s_new > h) | (zj > scl))
        nd_out = out & nondetect[:, j]
        out &= ~nondetect[:, j]
        st = np.where(out, np.where(pending, CONFIRMED, PENDING),
                      np.where(nd_out, INCONCLUSIVE, np.where(pending, NOT_CONFIRMED, IN)))
        status[:, j] = np.where(ok, st, -1)
        charted = ok & ~nd_out
        cusum[:, j] = np.where(charted, s_new, np.where(ok, s_before, np.nan))
        # a new out-of-control point stays pending; the chart moves on otherwise
        advance = charted & ~(out & ~pending)
        s_before = np.where(advance, s_new, s_before)
        pending = np.where(ok & ~nd_out, out & ~pending, pending)
    return {"z": z, "cusum": cusum, "status": status}
