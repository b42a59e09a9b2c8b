"""Statistics of left-censored concentrations (results below the detection limit).

A non-detect is not zero and not the detection limit: it is "somewhere below DL". The methods
here estimate the mean, standard deviation and percentiles of a series that holds non-detects,
following Helsel (2012) and Helsel et al. (2020):

* :func:`kaplan_meier` -- Kaplan-Meier for left-censored data (the default; nonparametric).
* :func:`~tracescreen.statistics.ros.ros` -- robust regression on order statistics, lognormal,
  several detection limits (:mod:`tracescreen.statistics.ros`).
* :func:`~tracescreen.statistics.lognormal.lognormal_mle` -- maximum likelihood for a censored
  lognormal distribution (:mod:`tracescreen.statistics.lognormal`).
* :func:`substitute` -- substitution of 0, DL/2 or DL; only on request, always labelled.

Series convention (DEVELOPERS.md): ``values`` holds the detected value, or the detection limit
for a non-detect; ``nondetect`` is True for a non-detect. Concentrations in µg/L.

The ``*_grouped`` functions compute many series (site x analyte x fraction) in one vectorised pass
over padded arrays (:func:`tracescreen.statistics.series.chunks`).

References
----------
[Helsel2012]_, [HelselEtAl2020]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.statistics.lognormal import _lognormal_mle_rows
from tracescreen.statistics.options import METHODS
from tracescreen.statistics.ros import _ros_rows
from tracescreen.statistics.series import PROBS, as_series, chunks

#: Substitution factors for the ``substitution_*`` methods (fraction of the detection limit).
SUBSTITUTION = {"substitution_zero": 0.0, "substitution_half_dl": 0.5, "substitution_dl": 1.0}



# --------------------------------------------------------------------------- Kaplan-Meier

#: Rounding tolerance when comparing the KM distribution function with a percentile's probability.
_F_TOL = 1e-12


def _km_rows(x, nd, valid, probs=PROBS):
    """Kaplan-Meier for left-censored data, one series per row of padded arrays.

    ``x`` (g, m) values or detection limits, ``nd`` non-detect flags, ``valid`` real cells.
    Returns a dict of (g,) arrays: ``mean``, ``sd``, ``se`` (standard error of the mean,
    :func:`_km_mean_se`), ``efron_mass`` and ``q`` (g, len(probs)).
    """
    x = np.where(valid, x, np.inf)
    order = np.argsort(x, axis=1, kind="stable")
    x = np.take_along_axis(x, order, axis=1)
    valid = np.take_along_axis(valid, order, axis=1)
    det = valid & ~np.take_along_axis(nd, order, axis=1)
    g, m = x.shape
    n = valid.sum(axis=1)
    col = np.arange(m)
    # runs of equal values: b = number of observations <= x (a non-detect counts when DL <= x)
    last = np.ones((g, m), bool)
    last[:, :-1] = x[:, 1:] != x[:, :-1]
    first = np.ones((g, m), bool)
    first[:, 1:] = last[:, :-1]
    end = np.minimum.accumulate(np.where(last, col, m)[:, ::-1], axis=1)[:, ::-1]
    start = np.maximum.accumulate(np.where(first, col, 0), axis=1)
    cdet = np.cumsum(det, axis=1)
    before = np.where(start > 0, np.take_along_axis(cdet, np.maximum(start - 1, 0), axis=1), 0)
    d = cdet - before  # detects in the run, read at its last cell
    b = (end + 1).astype(float)
    jump = last & valid & (d > 0)
    f = np.where(jump, 1.0 - d / b, 1.0)
    # F(x_j-) = product of the factors at and above x_j (Helsel 2012, eq. 6-1, flipped KM)
    below = np.cumprod(f[:, ::-1], axis=1)[:, ::-1]
    at = np.ones((g, m))
    at[:, :-1] = below[:, 1:]  # F(x_j)
    w = np.where(jump, at - below, 0.0)
    efron = below[:, 0]  # mass below the smallest detect, placed at the smallest value (Efron)
    xs = np.where(valid, x, 0.0)
    xmin = xs[:, 0]
    mean = (w * xs).sum(axis=1) + efron * xmin
    var = (w * (xs - mean[:, None]) ** 2).sum(axis=1) + efron * (xmin - mean) ** 2
    with np.errstate(invalid="ignore", divide="ignore"):
        sd = np.sqrt(var * n / (n - 1))
    q = np.full((g, len(probs)), np.nan)
    for k, p in enumerate(probs):
        # F(x) >= p, with F values equal to p up to rounding (e.g. 20/40 = 0.5) counted as equal
        hit = jump & (at >= p - _F_TOL)
        pos = np.argmax(hit, axis=1)
        ok = hit.any(axis=1) & ~(efron >= p - _F_TOL)
        q[ok, k] = x[ok, pos[ok]]
    se = _km_mean_se(xs, jump, below, d, b, n)
    none = n == 0
    mean[none] = sd[none] = np.nan
    sd[n < 2] = np.nan
    return {"mean": mean, "sd": sd, "se": se, "efron_mass": efron, "q": q}


def _km_mean_se(xs, jump, below, d, b, n):
    """Standard error of the Kaplan-Meier mean, rows of sorted padded arrays (as in :func:`_km_rows`).

    The Greenwood-type variance of the restricted mean ([KleinMoeschberger2003]_, sec. 4.5) on the
    flipped scale: sum over distinct detected values v_j of A_j^2 d_j / (b_j (b_j - d_j)), with A_j the
    area under F from the smallest value to v_j; times n / (n - 1), so that without non-detects it
    is s / sqrt(n) ([Helsel2012]_, ch. 6). NaN with fewer than 2 values or no detect.
    """
    g, m = xs.shape
    col = np.arange(m)
    jump_at = np.maximum.accumulate(np.where(jump, col, -1), axis=1)  # last distinct detect at or before
    prev = np.full((g, m), -1)
    prev[:, 1:] = jump_at[:, :-1]
    prev_value = np.where(prev >= 0, np.take_along_axis(xs, np.maximum(prev, 0), axis=1), xs[:, :1])
    area = np.cumsum(np.where(jump, (xs - prev_value) * below, 0.0), axis=1)  # ∫ F from the smallest value
    with np.errstate(invalid="ignore", divide="ignore"):
        terms = np.where(jump & (b > d), area ** 2 * d / (b * (b - d)), 0.0)
        var = terms.sum(axis=1) * n / (n - 1)
    return np.where((n >= 2) & jump.any(axis=1), np.sqrt(var), np.nan)


def kaplan_meier(values, nondetect, probs=PROBS) -> dict:
    """Kaplan-Meier statistics of one left-censored series.

    The survival-analysis estimator is applied to left-censored data by flipping (Helsel 2012,
    ch. 6): the cumulative distribution is
    F(x) = prod over detected values x_(j) > x of (1 - d_j / b_j), with d_j detects at x_(j) and
    b_j the observations <= x_(j) (a non-detect counts when its detection limit <= x_(j)).

    Parameters
    ----------
    values : array_like
        Detected value, or the detection limit for a non-detect [µg/L].
    nondetect : array_like of bool
        True where the result is below its detection limit.
    probs : sequence of float
        Probabilities of the percentiles to return.

    Returns
    -------
    dict
        ``mean``, ``sd`` [µg/L], ``quantiles`` (array, NaN where the percentile lies below the
        smallest detected value, i.e. is only known as "< that value"), ``efron_mass`` (the
        probability mass below the smallest detect).

    Notes
    -----
    When the smallest value is a non-detect, the mass below the smallest detect has no location;
    the Efron (1967) correction used here places it at the smallest value (the lowest detection
    limit), which biases the mean high (Helsel 2012, sec. 6.3). ``sd`` is the standard deviation
    of the estimated distribution times sqrt(n / (n - 1)), so that with no non-detects it equals
    the ordinary sample standard deviation. A percentile p is the smallest value x with
    F(x) >= p, where F(x) equal to p up to rounding (1e-12) counts as equal -- e.g. the median
    of 40 values whose F reaches exactly 20/40 is the 20th value, as in exact arithmetic.

    References
    ----------
    [KaplanMeier1958]_, [Efron1967]_, [Helsel2012]_ (docs/references.md)
    """
    x, nd = as_series(values, nondetect)
    out = _km_rows(x[None, :], nd[None, :], np.ones((1, x.size), bool), tuple(probs))
    return {
        "mean": out["mean"][0],
        "sd": out["sd"][0],
        "quantiles": out["q"][0],
        "efron_mass": out["efron_mass"][0],
    }


def kaplan_meier_grouped(values, nondetect, codes, n_groups, probs=PROBS) -> pd.DataFrame:
    """:func:`kaplan_meier` for many series at once (vectorised over groups).

    Parameters
    ----------
    values, nondetect : array_like
        As for :func:`kaplan_meier`, all series concatenated.
    codes : array_like of int
        Group (series) code of each value, 0 .. n_groups - 1.
    n_groups : int
        Number of groups.

    Returns
    -------
    DataFrame
        One row per group code: ``mean``, ``sd``, ``se`` (standard error of the mean), ``efron_mass``
        and ``q<100 p>`` columns (e.g. ``q50``); NaN for groups without values.
    """
    x, nd = as_series(values, nondetect)
    out = np.full((n_groups, 4 + len(probs)), np.nan)
    for chunk in chunks(np.asarray(codes), n_groups):
        r = _km_rows(chunk.take(x, np.inf), chunk.take(nd, False), chunk.valid, tuple(probs))
        out[chunk.groups] = np.column_stack([r["mean"], r["sd"], r["se"], r["efron_mass"], r["q"]])
    names = ["mean", "sd", "se", "efron_mass"] + [f"q{round(100 * p)}" for p in probs]
    return pd.DataFrame(out, columns=names)


# --------------------------------------------------------------------------- plain statistics


def _plain_rows(x, valid, probs=PROBS):
    """Sample mean, sd (n - 1) and percentiles (numpy's default linear interpolation) per row."""
    xv = np.where(valid, x, np.nan)
    n = valid.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.nansum(xv, axis=1) / n
        sd = np.sqrt(np.nansum((xv - mean[:, None]) ** 2, axis=1) / (n - 1))
    mean = np.where(n > 0, mean, np.nan)
    sd = np.where(n > 1, sd, np.nan)
    q = np.full((x.shape[0], len(probs)), np.nan)
    some = n > 0
    if some.any() and probs:
        q[some] = np.nanpercentile(xv[some], [100 * p for p in probs], axis=1).T
    return mean, sd, q


def substitute(values, nondetect, fraction: float) -> np.ndarray:
    """Replace each non-detect by ``fraction`` x its detection limit (0, 0.5 or 1 usually).

    Substitution invents values and can create false trends and patterns (Helsel 2006); it is
    offered only on request, and every output that uses it says so in its ``method``.

    References
    ----------
    [Helsel2006]_ (docs/references.md)
    """
    x, nd = as_series(values, nondetect)
    return np.where(nd, fraction * x, x)


# --------------------------------------------------------------------------- all series


def censored_statistics_grouped(values, nondetect, codes, n_groups, method="kaplan_meier",
                                probs=PROBS, km: pd.DataFrame | None = None) -> pd.DataFrame:
    """Mean, sd and percentiles of many series with one method, and the method actually used.

    Series without non-detects always get the plain sample statistics (``sample_statistics``:
    mean, sd with n - 1, percentiles by numpy's linear interpolation). Otherwise ``method``:
    ``kaplan_meier``, ``ros``, ``mle_lognormal`` (all vectorised over series) or a substitution (``substitution_zero``, ``substitution_half_dl``,
    ``substitution_dl``; vectorised), whose name stays in the ``method`` column.

    ``km``: :func:`kaplan_meier_grouped` of these values with these ``probs``, when the caller has it
    (a group's row does not depend on the other groups: it is read for the groups with non-detects).

    Returns
    -------
    DataFrame
        One row per group code: ``mean``, ``sd``, ``q<100 p>`` [µg/L], ``method``.
    """
    if method not in METHODS:
        raise ValueError(f"unknown method {method!r}; choose one of {', '.join(METHODS)}")
    x, nd = as_series(values, nondetect)
    codes = np.asarray(codes, dtype=np.int64)
    qcols = [f"q{round(100 * p)}" for p in probs]
    out = pd.DataFrame(np.nan, index=range(n_groups), columns=["mean", "sd", *qcols])
    any_nd = np.bincount(codes, weights=nd, minlength=n_groups) > 0
    label = np.where(any_nd, method, "sample_statistics").astype(object)
    x_plain = substitute(x, nd, SUBSTITUTION[method]) if method in SUBSTITUTION else x
    plain = ~any_nd[codes] | (method in SUBSTITUTION)
    for chunk in chunks(codes[plain], n_groups):
        mean, sd, q = _plain_rows(chunk.take(x_plain[plain], np.nan), chunk.valid, probs)
        out.iloc[chunk.groups] = np.column_stack([mean, sd, q])
    todo = ~plain
    if method == "kaplan_meier" and todo.any():
        km = kaplan_meier_grouped(x[todo], nd[todo], codes[todo], n_groups, probs) if km is None else km
        hit = np.unique(codes[todo])
        out.iloc[hit] = km.loc[hit, ["mean", "sd", *qcols]].to_numpy()
    elif method == "ros" and todo.any():
        for chunk in chunks(codes[todo], n_groups, cells=lambda m: m * m):
            imputed = _ros_rows(chunk.take(x[todo], 1.0), chunk.take(nd[todo], False), chunk.valid)
            mean, sd, q = _plain_rows(imputed, chunk.valid & np.isfinite(imputed), probs)
            out.iloc[chunk.groups] = np.column_stack([mean, sd, q])  # unfitted rows: NaN
    elif method == "mle_lognormal" and todo.any():
        for chunk in chunks(codes[todo], n_groups):
            mu, sigma = _lognormal_mle_rows(chunk.take(x[todo], 1.0), chunk.take(nd[todo], False),
                                            chunk.valid)
            mean = np.exp(mu + sigma**2 / 2)
            from scipy import special

            q = np.exp(mu[:, None] + sigma[:, None] * special.ndtri(np.asarray(probs, float)))  # normal quantiles
            out.iloc[chunk.groups] = np.column_stack([mean, mean * np.sqrt(np.expm1(sigma**2)), q])
    out["method"] = label
    return out
