"""Robust regression on order statistics (ROS) for left-censored concentrations, several detection limits.

Non-detects are imputed from a lognormal fitted to the detects by their plotting positions
(Helsel 2012, ch. 6; Helsel et al. 2020). Series convention and units: :mod:`tracescreen.statistics.censored`.
"""

from __future__ import annotations

import numpy as np

from tracescreen.statistics.series import as_series


def ros(values, nondetect) -> np.ndarray:
    """Robust regression on order statistics (lognormal): impute each non-detect.

    Plotting positions follow Helsel & Cohn (1988) for several detection limits: with detection
    limits DL_1 < ... < DL_m, A_j detects in [DL_j, DL_j+1), B_j values below DL_j (non-detects
    at or below DL_j and detects below it), C_j non-detects at DL_j, the exceedance probability
    PE_j = PE_j+1 + (1 - PE_j+1) A_j / (A_j + B_j) from PE_m+1 = 0 downwards. Detects in
    interval j get (1 - PE_j) + (PE_j - PE_j+1) r / (A_j + 1), non-detects at DL_j get
    (1 - PE_j) r / (C_j + 1). ln(detects) is regressed (least squares) on the normal scores of
    their plotting positions; the non-detects take exp(fitted line) at their normal scores.

    Parameters
    ----------
    values : array_like
        Detected value, or the detection limit for a non-detect [µg/L]; all > 0.
    nondetect : array_like of bool

    Returns
    -------
    ndarray
        The series with each non-detect replaced by its imputed value (input order); detects are
        unchanged. All NaN when fewer than 2 values are detected (no regression possible).

    Notes
    -----
    Non-detects with a detection limit above the largest detect are kept (their interval has no
    detects, A_j = 0) -- statsmodels' ``impute_ros`` drops them instead. No silent substitution
    is made; statistics of the returned set are the ROS estimates (Helsel 2012, sec. 6.2).

    References
    ----------
    [HelselCohn1988]_, [Helsel2012]_ (docs/references.md)
    """
    x, nd = as_series(values, nondetect)
    return _ros_rows(x[None, :], nd[None, :], np.ones((1, x.size), bool))[0]


def _rank_in_runs(keys, live):
    """1-based rank of each cell within its run of equal keys along the row (sorted keys)."""
    g, m = keys.shape
    new = np.ones((g, m), bool)
    new[:, 1:] = (keys[:, 1:] != keys[:, :-1]) | ~live[:, :-1]
    col = np.arange(m)
    return (col - np.maximum.accumulate(np.where(new, col, 0), axis=1) + 1).astype(float)


def _ros_rows(x, nd, valid):
    """ROS for each row of padded arrays (see :func:`ros`); NaN where ROS cannot be fitted."""
    from scipy import stats  # imported on use (a slow import)
    g, m = x.shape
    det, ndv = valid & ~nd, valid & nd
    out = np.where(valid, x, np.nan)
    fit = ndv.any(axis=1) & (det.sum(axis=1) >= 2) & ~(valid & ~(x > 0)).any(axis=1)
    # detection limits per row (sorted, unique), padded with inf; min(x) first if below them
    cens = np.sort(np.where(ndv, x, np.inf), axis=1)
    first = np.isfinite(cens)
    first[:, 1:] &= cens[:, 1:] != cens[:, :-1]
    slot = np.cumsum(first, axis=1) - 1
    dls = np.full((g, m + 2), np.inf)
    r, c = np.nonzero(first)
    dls[r, slot[r, c]] = cens[r, c]
    xmin = np.where(valid, x, np.inf).min(axis=1)
    lower = xmin < dls[:, 0]
    dls[lower, 1:] = dls[lower, :-1]
    dls[lower, 0] = xmin[lower]
    k = np.isfinite(dls).sum(axis=1)
    dl, up = dls[:, :-1, None], dls[:, 1:, None]
    xx = x[:, None, :]
    A = (det[:, None, :] & (xx >= dl) & (xx < up)).sum(axis=2)
    B = (ndv[:, None, :] & (xx <= dl)).sum(axis=2) + (det[:, None, :] & (xx < dl)).sum(axis=2)
    C = (ndv[:, None, :] & (xx == dl)).sum(axis=2)
    pe = np.zeros((g, m + 2))
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(A + B > 0, A / np.maximum(A + B, 1), 0.0)
    for j in range(m, -1, -1):  # recursion over detection-limit index, vectorised over series
        pe[:, j] = np.where(j < k, pe[:, j + 1] + (1 - pe[:, j + 1]) * share[:, j], 0.0)
    # interval (detects) or own limit (non-detects): last DL <= x
    idx = np.clip((dls[:, None, :] <= x[:, :, None]).sum(axis=2) - 1, 0, m)
    pe_j = np.take_along_axis(pe, idx, 1)
    pe_next = np.take_along_axis(pe, idx + 1, 1)
    # detects ranked within their interval (ascending), non-detects within their limit
    pp = np.full((g, m), np.nan)
    for mask, count in ((det, A), (ndv, C)):
        order = np.argsort(np.where(mask, x, np.inf), axis=1, kind="stable")
        live = np.take_along_axis(mask, order, 1)
        rank = _rank_in_runs(np.take_along_axis(idx, order, 1), live)
        n_j = np.take_along_axis(count, np.take_along_axis(idx, order, 1), 1) + 1.0
        pj, pn = np.take_along_axis(pe_j, order, 1), np.take_along_axis(pe_next, order, 1)
        if mask is det:
            val = (1 - pj) + (pj - pn) * rank / n_j
        else:  # Helsel & Cohn: then sorted and given to the non-detects in ascending order
            val = np.sort(np.where(live, (1 - pj) * rank / n_j, np.inf), axis=1)
        scattered = np.empty((g, m))
        np.put_along_axis(scattered, order, val, 1)
        pp = np.where(mask, scattered, pp)
    z = stats.norm.ppf(np.where(valid, pp, 0.5))
    with np.errstate(invalid="ignore", divide="ignore"):
        lx = np.log(np.where(det, x, 1.0))
        nd_ = det.sum(axis=1)
        zm = np.where(det, z, 0).sum(axis=1) / nd_
        lm = np.where(det, lx, 0).sum(axis=1) / nd_
        dz = np.where(det, z - zm[:, None], 0)
        slope = (dz * (lx - lm[:, None])).sum(axis=1) / (dz * dz).sum(axis=1)
        imputed = np.exp(lm[:, None] + slope[:, None] * (z - zm[:, None]))
    out = np.where(ndv, imputed, out)
    out[~fit & ndv.any(axis=1)] = np.nan
    return out
