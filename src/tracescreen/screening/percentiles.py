"""Percentiles of many groups at once, by the methods limit tables name, and non-detect substitution.

Percentile methods (:data:`PERCENTILE_METHODS`): ``epa_lcr`` ([CFR40-141]_ 141.80(c)(3): rank the n
results, take the one numbered 0.9 n; the rule states no rounding for a non-integer 0.9 n, and this
reading rounds it to the nearest whole number, halves up, as a state worksheet does [LCR90-worksheet]_;
with exactly 5 results the mean of the two highest; with fewer, the highest), ``epa_lcr_next_whole``
(the same, with 0.9 n raised to the next whole number: the other published reading, nearest rank),
``nearest_rank`` (smallest value with at
least p % of results at or below it; [HyndmanFan1996]_ type 1), ``linear`` (type 7), ``hazen``
(type 5), ``weibull`` (type 6).

.. [LCR90-worksheet] "Lead and Copper 90th Percentile Examples", a state drinking-water programme
   worksheet (stored copy: studylib.net doc 9493621): "If this is not a whole number, round to the
   nearest whole number. Round down ... if the decimal is 0.4 or less and round up ... if the decimal
   is 0.5 or higher."
"""

from __future__ import annotations

import numpy as np

from tracescreen.limits.schema import PERCENTILE_METHOD_NAMES

#: method name -> numpy.quantile method (None: the rule's own procedure)
PERCENTILE_METHODS = {"epa_lcr": None, "epa_lcr_next_whole": None, "nearest_rank": "inverted_cdf",
                      "linear": "linear", "hazen": "hazen", "weibull": "weibull"}
assert tuple(PERCENTILE_METHODS) == PERCENTILE_METHOD_NAMES, "schema and percentiles disagree on percentile methods"


def substitute(value_ug_L, detection_limit_ug_L, detected, rule: str) -> np.ndarray:
    """Values with non-detects replaced by 0, DL/2 or DL (``rule``; kaplan_meier uses DL here)."""
    dl = np.asarray(detection_limit_ug_L, dtype=float)
    nd_value = {"zero": np.zeros_like(dl), "half_dl": dl / 2.0}.get(rule, dl)
    return np.where(np.asarray(detected, dtype=bool), np.asarray(value_ug_L, dtype=float), nd_value)


def group_percentiles(values, group, p, method) -> np.ndarray:
    """Percentile of `values` within each group, vectorised over groups.

    Parameters
    ----------
    values : array of float
        Concentrations [µg/L].
    group : array of int
        Group number 0..G-1 of each value (every group non-empty).
    p : array of float
        Percentile (0-100) per group.
    method : array of str
        Method per group (:data:`PERCENTILE_METHODS`).

    Returns
    -------
    numpy.ndarray
        One value per group; NaN for a group holding a NaN.
    """
    v_all = np.asarray(values, dtype=float)
    g_all = np.asarray(group, dtype=np.int64)
    order = np.lexsort((v_all, g_all))
    v = v_all[order]
    n_groups = int(g_all.max()) + 1 if g_all.size else 0
    n = np.bincount(g_all, minlength=n_groups)
    start = np.concatenate([[0], np.cumsum(n)[:-1]])
    q = np.asarray(p, dtype=float) / 100.0
    meth = np.asarray(method, dtype=object)
    out = np.full(n_groups, np.nan)

    def at(i):  # value at 0-based position i of each group
        return v[start + np.clip(i, 0, n - 1)]

    def interpolate(h):  # h: 0-based fractional position
        h = np.clip(h, 0.0, n - 1.0)
        lo = np.floor(h + 1e-9).astype(np.int64)
        return at(lo) + (h - lo) * (at(lo + 1) - at(lo))

    candidates = {
        "epa_lcr": lambda: np.where(n < 5, at(n - 1), np.where(
            n == 5, (at(n - 1) + at(n - 2)) / 2.0, at(np.floor(q * n + 0.5 + 1e-9).astype(np.int64) - 1))),
        "epa_lcr_next_whole": lambda: np.where(n < 5, at(n - 1), np.where(
            n == 5, (at(n - 1) + at(n - 2)) / 2.0, at(np.ceil(q * n - 1e-9).astype(np.int64) - 1))),
        "nearest_rank": lambda: at(np.ceil(q * n - 1e-9).astype(np.int64) - 1),
        "linear": lambda: interpolate((n - 1) * q),
        "hazen": lambda: interpolate(n * q + 0.5 - 1.0),
        "weibull": lambda: interpolate((n + 1) * q - 1.0),
    }
    for name in set(meth.tolist()):
        m = meth == name
        out[m] = candidates[name]()[m]
    has_nan = np.bincount(g_all, weights=np.isnan(v_all).astype(float), minlength=n_groups) > 0
    out[has_nan] = np.nan
    return out


def percentile(values, p: float, method: str) -> float:
    """The p-th percentile (0 < p < 100) of one sample of values by a named method (see module doc)."""
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return float("nan")
    return float(group_percentiles(values, np.zeros(values.size, dtype=np.int64), [p], [method])[0])
