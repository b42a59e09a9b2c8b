"""Statistics of left-censored concentrations (results below the detection limit).

A non-detect is not zero and not the detection limit: it is "somewhere below DL". The methods
here estimate the mean, standard deviation and percentiles of a series that holds non-detects,
following Helsel (2012) and Helsel et al. (2020):

* :func:`kaplan_meier` -- Kaplan-Meier for left-censored data (the default; nonparametric).
* :func:`ros` -- robust regression on order statistics, lognormal, several detection limits.
* :func:`lognormal_mle` -- maximum likelihood for a censored lognormal distribution.
* :func:`substitute` -- substitution of 0, DL/2 or DL; only on request, always labelled.

Series convention (DEVELOPERS.md): ``values`` holds the detected value, or the detection limit
for a non-detect; ``nondetect`` is True for a non-detect. Concentrations in µg/L.

The ``*_grouped`` functions compute many series (site x analyte x fraction) in one vectorised pass
over padded arrays (:mod:`tracescreen.grouped`).

References
----------
.. [1] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab and R,
   2nd ed. Wiley, Hoboken NJ.
.. [2] Helsel, D.R., Hirsch, R.M., Ryberg, K.R., Archfield, S.A., Gilroy, E.J. (2020).
   Statistical Methods in Water Resources. USGS Techniques and Methods 4-A3.
   https://doi.org/10.3133/tm4A3
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.statistics import grouped

#: Percentiles reported by the summary (as probabilities).
PROBS = (0.5, 0.9, 0.95)

#: Substitution factors for the ``substitution_*`` methods (fraction of the detection limit).
SUBSTITUTION = {"substitution_zero": 0.0, "substitution_half_dl": 0.5, "substitution_dl": 1.0}

#: Accepted ``method`` values for :func:`censored_statistics_grouped`.
METHODS = ("kaplan_meier", "ros", "mle_lognormal", *SUBSTITUTION)


def _as_series(values, nondetect):
    x = np.asarray(values, dtype=float)
    nd = np.zeros(x.shape, bool) if nondetect is None else np.asarray(nondetect, dtype=bool)
    if x.shape != nd.shape:
        raise ValueError("values and nondetect must have the same length")
    if np.isnan(x).any():
        raise ValueError("values contain NaN (a non-detect needs its detection limit)")
    return x, nd


# --------------------------------------------------------------------------- Kaplan-Meier

#: Rounding tolerance when comparing the KM distribution function with a percentile's probability.
_F_TOL = 1e-12


def _km_rows(x, nd, valid, probs=PROBS):
    """Kaplan-Meier for left-censored data, one series per row of padded arrays.

    ``x`` (g, m) values or detection limits, ``nd`` non-detect flags, ``valid`` real cells.
    Returns a dict of (g,) arrays: ``mean``, ``sd``, ``efron_mass`` and ``q`` (g, len(probs)).
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
    none = n == 0
    mean[none] = sd[none] = np.nan
    sd[n < 2] = np.nan
    return {"mean": mean, "sd": sd, "efron_mass": efron, "q": q}


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
    .. [1] Kaplan, E.L., Meier, P. (1958). Nonparametric estimation from incomplete
       observations. J. Am. Stat. Assoc. 53: 457-481.
    .. [2] Efron, B. (1967). The two sample problem with censored data. Proc. 5th Berkeley
       Symposium on Mathematical Statistics and Probability, 4: 831-853.
    .. [3] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab and R,
       2nd ed., ch. 6. Wiley.
    """
    x, nd = _as_series(values, nondetect)
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
        One row per group code: ``mean``, ``sd``, ``efron_mass`` and ``q<100 p>`` columns
        (e.g. ``q50``); NaN for groups without values.
    """
    x, nd = _as_series(values, nondetect)
    out = np.full((n_groups, 3 + len(probs)), np.nan)
    for chunk in grouped.chunks(np.asarray(codes), n_groups):
        r = _km_rows(chunk.take(x, np.inf), chunk.take(nd, False), chunk.valid, tuple(probs))
        out[chunk.groups] = np.column_stack([r["mean"], r["sd"], r["efron_mass"], r["q"]])
    names = ["mean", "sd", "efron_mass"] + [f"q{round(100 * p)}" for p in probs]
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
    .. [1] Helsel, D.R. (2006). Fabricating data: how substituting values for nondetects can
       ruin results, and what can be done about it. Chemosphere 65: 2434-2439.
    """
    x, nd = _as_series(values, nondetect)
    return np.where(nd, fraction * x, x)


# --------------------------------------------------------------------------- ROS


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
    .. [1] Helsel, D.R., Cohn, T.A. (1988). Estimation of descriptive statistics for multiply
       censored water quality data. Water Resources Research 24(12): 1997-2004.
    .. [2] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab and R,
       2nd ed., ch. 6. Wiley.
    """
    x, nd = _as_series(values, nondetect)
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


# --------------------------------------------------------------------------- lognormal MLE


def lognormal_mle(values, nondetect, probs=PROBS) -> dict:
    """Maximum-likelihood fit of a lognormal distribution to left-censored data.

    Maximises l(mu, sigma) = sum over detects of [ln phi((ln x - mu)/sigma) - ln sigma - ln x]
    + sum over non-detects of ln Phi((ln DL - mu)/sigma) over (mu, ln sigma) with
    scipy.optimize (BFGS from the log-scale moments of the detects).

    Returns
    -------
    dict
        ``mu``, ``sigma`` (log scale), ``mean`` = exp(mu + sigma^2/2),
        ``sd`` = mean sqrt(exp(sigma^2) - 1), ``quantiles`` = exp(mu + sigma z_p) [µg/L].
        NaN when fewer than 2 distinct detected values.

    Notes
    -----
    Advised for larger series (about 50 values or more) that fit a lognormal well
    (Helsel 2012, ch. 5).

    References
    ----------
    .. [1] Cohen, A.C. (1959). Simplified estimators for the normal distribution when samples are
       singly censored or truncated. Technometrics 1: 217-237.
    .. [2] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab and R,
       2nd ed., ch. 5. Wiley.
    """
    from scipy import optimize, stats  # imported on use (a slow import)
    x, nd = _as_series(values, nondetect)
    nan = {"mu": np.nan, "sigma": np.nan, "mean": np.nan, "sd": np.nan,
           "quantiles": np.full(len(probs), np.nan)}
    ld = np.log(x[~nd]) if (x > 0).all() else np.array([])
    if np.unique(ld).size < 2:
        return nan
    lc = np.log(x[nd])

    def nll(theta):
        mu, ls = theta
        s = np.exp(ls)
        zd, zc = (ld - mu) / s, (lc - mu) / s
        val = -(stats.norm.logpdf(zd).sum() - ld.size * ls + stats.norm.logcdf(zc).sum())
        h = np.exp(stats.norm.logpdf(zc) - stats.norm.logcdf(zc))  # inverse Mills ratio
        g_mu = -(zd.sum() / s - (h / s).sum())
        g_ls = -((zd**2).sum() - ld.size - (h * zc).sum())
        return val, np.array([g_mu, g_ls])

    start = np.array([ld.mean(), np.log(ld.std(ddof=1))])
    res = optimize.minimize(nll, start, jac=True, method="BFGS", options={"gtol": 1e-10})
    mu, sigma = res.x[0], float(np.exp(res.x[1]))
    mean = np.exp(mu + sigma**2 / 2)
    return {
        "mu": mu,
        "sigma": sigma,
        "mean": mean,
        "sd": mean * np.sqrt(np.expm1(sigma**2)),
        "quantiles": np.exp(mu + sigma * stats.norm.ppf(np.asarray(probs, float))),
    }


def _lognormal_mle_rows(x, nd, valid, iterations=200):
    """Censored lognormal MLE for each row of padded arrays by damped Newton steps.

    The same likelihood as :func:`lognormal_mle` (which fits one series with scipy.optimize and
    serves as its check), maximised over (mu, ln sigma) with the analytic gradient and Hessian,
    halving a step until the likelihood does not decrease; a gradient step where the Hessian is
    not negative definite. Returns (mu, sigma), NaN where fewer than 2 distinct detects.
    """
    from scipy import special, stats  # imported on use (a slow import)
    det, ndv = valid & ~nd, valid & nd
    with np.errstate(divide="ignore", invalid="ignore"):
        lx = np.log(np.where(valid & (x > 0), x, 1.0))
    n_d = det.sum(axis=1)
    ld = np.where(det, lx, np.nan)
    distinct = (np.nanmax(np.where(det, lx, -np.inf), axis=1)
                > np.nanmin(np.where(det, lx, np.inf), axis=1))
    ok = distinct & (n_d >= 2) & ~(valid & ~(x > 0)).any(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mu = np.where(ok, np.nansum(ld, axis=1) / n_d, 0.0)
        tau = np.where(ok, np.log(np.sqrt(np.nansum((ld - mu[:, None]) ** 2, axis=1) / (n_d - 1))), 0.0)

    def loglik(mu, tau):
        z = (lx - mu[:, None]) / np.exp(tau)[:, None]
        return (np.where(det, -0.5 * z * z - tau[:, None], 0.0).sum(axis=1)
                + np.where(ndv, special.log_ndtr(z), 0.0).sum(axis=1))

    current = loglik(mu, tau)
    for _ in range(iterations):
        s = np.exp(tau)[:, None]
        z = (lx - mu[:, None]) / s
        h = np.exp(stats.norm.logpdf(z) - special.log_ndtr(z))  # inverse Mills ratio
        hp = -h * (z + h)  # its derivative
        gm = np.where(det, z / s, 0).sum(1) + np.where(ndv, -h / s, 0).sum(1)
        gt = np.where(det, z * z - 1, 0).sum(1) + np.where(ndv, -h * z, 0).sum(1)
        hmm = np.where(det, -1 / s**2, 0).sum(1) + np.where(ndv, hp / s**2, 0).sum(1)
        hmt = np.where(det, -2 * z / s, 0).sum(1) + np.where(ndv, (hp * z + h) / s, 0).sum(1)
        htt = np.where(det, -2 * z * z, 0).sum(1) + np.where(ndv, hp * z * z + h * z, 0).sum(1)
        detH = hmm * htt - hmt**2
        newton = (hmm < 0) & (detH > 0)
        with np.errstate(invalid="ignore", divide="ignore"):
            dm = np.where(newton, -(htt * gm - hmt * gt) / detH, gm / (np.abs(hmm) + 1.0))
            dt = np.where(newton, -(hmm * gt - hmt * gm) / detH, gt / (np.abs(htt) + 1.0))
        step = np.ones_like(mu)
        todo = ok & ((np.abs(gm) + np.abs(gt)) > 1e-10)
        if not todo.any():
            break
        for _ in range(40):  # backtracking, vectorised over series
            trial = loglik(mu + step * dm, tau + step * dt)
            worse = todo & ~(trial >= current)
            if not worse.any():
                break
            step = np.where(worse, step / 2, step)
        mu = np.where(todo, mu + step * dm, mu)
        tau = np.where(todo, tau + step * dt, tau)
        current = np.where(todo, loglik(mu, tau), current)
    return np.where(ok, mu, np.nan), np.where(ok, np.exp(tau), np.nan)


# --------------------------------------------------------------------------- all series


def censored_statistics_grouped(values, nondetect, codes, n_groups, method="kaplan_meier",
                                probs=PROBS) -> pd.DataFrame:
    """Mean, sd and percentiles of many series with one method, and the method actually used.

    Series without non-detects always get the plain sample statistics (``sample_statistics``:
    mean, sd with n - 1, percentiles by numpy's linear interpolation). Otherwise ``method``:
    ``kaplan_meier``, ``ros``, ``mle_lognormal`` (all vectorised over series) or a substitution (``substitution_zero``, ``substitution_half_dl``,
    ``substitution_dl``; vectorised), whose name stays in the ``method`` column.

    Returns
    -------
    DataFrame
        One row per group code: ``mean``, ``sd``, ``q<100 p>`` [µg/L], ``method``.
    """
    from scipy import stats  # imported on use (a slow import)
    if method not in METHODS:
        raise ValueError(f"unknown method {method!r}; choose one of {', '.join(METHODS)}")
    x, nd = _as_series(values, nondetect)
    codes = np.asarray(codes, dtype=np.int64)
    qcols = [f"q{round(100 * p)}" for p in probs]
    out = pd.DataFrame(np.nan, index=range(n_groups), columns=["mean", "sd", *qcols])
    any_nd = np.bincount(codes, weights=nd, minlength=n_groups) > 0
    label = np.where(any_nd, method, "sample_statistics").astype(object)
    x_plain = substitute(x, nd, SUBSTITUTION[method]) if method in SUBSTITUTION else x
    plain = ~any_nd[codes] | (method in SUBSTITUTION)
    for chunk in grouped.chunks(codes[plain], n_groups):
        mean, sd, q = _plain_rows(chunk.take(x_plain[plain], np.nan), chunk.valid, probs)
        out.iloc[chunk.groups] = np.column_stack([mean, sd, q])
    todo = ~plain
    if method == "kaplan_meier" and todo.any():
        km = kaplan_meier_grouped(x[todo], nd[todo], codes[todo], n_groups, probs)
        hit = np.unique(codes[todo])
        out.iloc[hit] = km.loc[hit, ["mean", "sd", *qcols]].to_numpy()
    elif method == "ros" and todo.any():
        for chunk in grouped.chunks(codes[todo], n_groups, cells=lambda m: m * m):
            imputed = _ros_rows(chunk.take(x[todo], 1.0), chunk.take(nd[todo], False), chunk.valid)
            mean, sd, q = _plain_rows(imputed, chunk.valid & np.isfinite(imputed), probs)
            out.iloc[chunk.groups] = np.column_stack([mean, sd, q])  # unfitted rows: NaN
    elif method == "mle_lognormal" and todo.any():
        for chunk in grouped.chunks(codes[todo], n_groups):
            mu, sigma = _lognormal_mle_rows(chunk.take(x[todo], 1.0), chunk.take(nd[todo], False),
                                            chunk.valid)
            mean = np.exp(mu + sigma**2 / 2)
            q = np.exp(mu[:, None] + sigma[:, None] * stats.norm.ppf(np.asarray(probs, float)))
            out.iloc[chunk.groups] = np.column_stack([mean, mean * np.sqrt(np.expm1(sigma**2)), q])
    out["method"] = label
    return out
