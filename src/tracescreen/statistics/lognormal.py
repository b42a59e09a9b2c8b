"""Maximum likelihood for a censored lognormal distribution (left-censored concentrations).

Helsel (2012, ch. 5). Series convention and units: :mod:`tracescreen.statistics.censored`.
"""

from __future__ import annotations

import numpy as np

from tracescreen.statistics.series import PROBS, as_series


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
    [Cohen1959]_, [Helsel2012]_ (docs/references.md)
    """
    from scipy import optimize, stats  # imported on use (a slow import)
    x, nd = as_series(values, nondetect)
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
