"""Land's exact confidence limits for the arithmetic mean of a lognormal distribution.

For ``y = ln x`` normal with mean ``mu`` and variance ``sigma^2``, the arithmetic mean of ``x`` is
``exp(mu + sigma^2 / 2)``. Land's limits (Land 1971, 1975 [land1975]_) invert the uniformly most
powerful unbiased test of ``mu + lambda sigma^2`` (``lambda = 1/2``). With ``nu = n - 1``,
``k = (nu + 1) / (2 lambda n)`` and ``S = sqrt(2 lambda s_y^2 / k)``, the limit is

    ln(limit) = ȳ + lambda s_y^2 + (k S / sqrt(nu)) · C(S, nu, level),

where ``C = m sqrt(nu) / S`` and ``m`` solves ``P(tau <= T_m) = 1 - level`` for
``T_m = sqrt(nu + 1)(-S^2/2 - m) / S``. ``tau`` follows Land's conditional t distribution: with
``tau = sqrt(nu) tan(theta)``, ``theta`` has density proportional to
``cos(theta)^(nu - 1) exp((nu + 1) zeta sin(theta))`` on ``(-pi/2, pi/2)``, and
``zeta = -S sqrt(nu + T_m^2) / (2 sqrt(nu + 1))``. This is the guidance's "Land's H" method
(USEPA 2009, ch. 21 [usepa2009]_; the tabulated H equals ``C`` up to the factor
``sqrt(n - 1) / (s_y)·k S / sqrt(nu)``). Computed for many series at once: the distribution
function by composite Gauss-Legendre quadrature in ``theta``, ``m`` by regula falsi (vectorised).

References
----------
.. [land1975] Land, C.E. (1975). Tables of confidence limits for linear functions of the normal
   mean and variance. Selected Tables in Mathematical Statistics III: 385-419. (Land, C.E.
   (1971). Confidence intervals for linear functions of the normal mean and variance. Annals of
   Mathematical Statistics 42: 1187-1205.)
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 21 (Example 21-3).
"""

from __future__ import annotations

import numpy as np
from scipy import special

_X, _WX = np.polynomial.legendre.leggauss(8)


def _panels(lo: np.ndarray, hi: np.ndarray, n_panels: int = 48):
    """Nodes (g, P*8) and weights on [lo, hi] per row, composite 8-point Gauss-Legendre."""
    edges = lo[:, None] + (hi - lo)[:, None] * np.linspace(0.0, 1.0, n_panels + 1)[None, :]
    a, b = edges[:, :-1, None], edges[:, 1:, None]
    nodes = a + (b - a) * (_X + 1) / 2
    weights = (b - a) / 2 * _WX
    g = lo.shape[0]
    return nodes.reshape(g, -1), weights.reshape(g, -1)


def _log_density(theta, nu, zeta):
    return (nu[:, None] - 1) * np.log(np.cos(theta)) + (nu[:, None] + 1) * zeta[:, None] * np.sin(theta)


def _cdf(t: np.ndarray, nu: np.ndarray, zeta: np.ndarray) -> np.ndarray:
    """P(tau <= t) under Land's conditional t distribution, per row."""
    half = np.pi / 2 * (1 - 1e-12)
    full_x, full_w = _panels(np.full(t.shape, -half), np.full(t.shape, half))
    lf = _log_density(full_x, nu, zeta)
    top = lf.max(axis=1, keepdims=True)
    total = np.sum(full_w * np.exp(lf - top), axis=1)
    upper = np.clip(np.arctan(t / np.sqrt(nu)), -half, half)
    part_x, part_w = _panels(np.full(t.shape, -half), upper)
    part = np.sum(part_w * np.exp(_log_density(part_x, nu, zeta) - top), axis=1)
    return np.clip(part / total, 0.0, 1.0)


def _h(m, S, nu, root, alpha):
    """P(tau <= T_m) - alpha: positive below the root, negative above."""
    t = root * (-S ** 2 / 2 - m) / S
    zeta = -S * np.sqrt(nu + t ** 2) / (2 * root)
    return _cdf(t, nu, zeta) - alpha


def lands_c(S, nu, level: float, iterations: int = 40, chunk: int = 256) -> np.ndarray:
    """Land's C factor for arrays of ``S`` and ``nu`` at one ``level`` (0 < level < 1).

    ``m`` is found by the Illinois variant of regula falsi, vectorised over rows (converges in a
    dozen steps), between ``T_m = +60`` and ``T_m = -60``.
    """
    S = np.atleast_1d(np.asarray(S, dtype=float))
    nu = np.broadcast_to(np.asarray(nu, dtype=float), S.shape).copy()
    out = np.empty(S.shape)
    for start in range(0, len(S), chunk):
        sl = slice(start, start + chunk)
        out[sl] = _lands_c_rows(S[sl], nu[sl], 1.0 - level, iterations)
    return out


def _lands_c_rows(S, nu, alpha, iterations):
    root = np.sqrt(nu + 1)
    # start from Cox's approximation (Land's m is the limit's offset over ȳ + s²/2 divided by k),
    # widened to T_m = -60 .. +60 where it does not bracket the root
    # (for the lognormal mean k = 1 and S = s_y: m is the offset of ln(limit) over ȳ + s_y²/2)
    s2 = S ** 2
    guess = special.ndtri(1.0 - alpha) * np.sqrt(s2 / (nu + 1) + s2 ** 2 / (2 * nu))
    width = 0.25 * np.abs(guess) + S / root
    a, b = guess - width, guess + width
    fa, fb = _h(a, S, nu, root, alpha), _h(b, S, nu, root, alpha)
    wide_a, wide_b = -S ** 2 / 2 - 60 * S / root, -S ** 2 / 2 + 60 * S / root
    bad_a, bad_b = fa <= 0, fb >= 0
    if bad_a.any() or bad_b.any():
        a, b = np.where(bad_a, wide_a, a), np.where(bad_b, wide_b, b)
        fa = np.where(bad_a, _h(a, S, nu, root, alpha), fa)
        fb = np.where(bad_b, _h(b, S, nu, root, alpha), fb)
    for _ in range(iterations):
        c = b - fb * (b - a) / (fb - fa)
        fc = _h(c, S, nu, root, alpha)
        opposite = np.sign(fc) != np.sign(fb)
        a, fa = np.where(opposite, b, a), np.where(opposite, fb, fa / 2)
        step = np.abs(c - b)
        b, fb = c, fc
        if np.all(step <= 1e-10 * (1 + np.abs(c))):
            break
    return b * np.sqrt(nu) / S


def land_limit(log_mean, log_sd, n, level: float) -> np.ndarray:
    """Land's one-sided confidence limit for the arithmetic mean of a lognormal variable.

    Parameters
    ----------
    log_mean, log_sd : array_like
        Mean and standard deviation (n - 1 divisor) of the natural logarithms.
    n : array_like of int
        Sample sizes (>= 3).
    level : float
        ``0.95`` gives the upper 95 % limit, ``0.05`` the lower 95 % limit.

    Returns
    -------
    ndarray
        The limit on the original scale (NaN where n < 3 or the log SD is 0).

    Examples
    --------
    Unified Guidance Example 21-3 (benzene, n = 8): upper 95 % limit of the mean.

    >>> round(float(land_limit(0.2036668, 1.2574974, 8, 0.95)[0]), 3)
    18.861
    """
    ybar = np.atleast_1d(np.asarray(log_mean, dtype=float))
    s = np.broadcast_to(np.asarray(log_sd, dtype=float), ybar.shape)
    n = np.broadcast_to(np.asarray(n, dtype=float), ybar.shape)
    out = np.full(ybar.shape, np.nan)
    ok = (n >= 3) & (s > 0) & np.isfinite(ybar)
    if ok.any():
        nu = n[ok] - 1
        k = (nu + 1) / n[ok]                  # (nu + 1) / (2 lambda n), lambda = 1/2
        S = np.sqrt(s[ok] ** 2 / k)
        C = lands_c(S, nu, level)
        out[ok] = np.exp(ybar[ok] + s[ok] ** 2 / 2 + k * S / np.sqrt(nu) * C)
    return out
