"""The status rule: how a result (or a statistic of results) compared with a limit gets its status.

The statuses, their order of severity and the comparison tolerance are defined once, in
:mod:`tracescreen.vocabulary`; this module holds the rules that choose among them:

* a single result (:func:`status_codes`, :func:`classify`): a detect above the limit exceeds it; a
  non-detect never does (its detection limit above the limit leaves it undecided); a result
  reported above the calibrated range (``>x``) exceeds when x is above the limit and cannot decide
  otherwise;
* a statistic over several results (:func:`statistic_status`, used by the period rules), from the
  value by the table's non-detect rule and its bounds with non-detects at zero and at their
  detection limit;
* the worst status of a group of rows (:func:`worst_status`).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import RANKED, REL_TOL, STATUS_CODE, STATUSES


def status_codes(detected, value_ug_L, detection_limit_ug_L, limit_ug_L, rel_tol: float = REL_TOL,
                 above_range=None) -> np.ndarray:
    """Status of each result against one limit each, as positions in :data:`~tracescreen.vocabulary.STATUSES`.

    Parameters
    ----------
    detected : array of bool
        False for a non-detect.
    value_ug_L, detection_limit_ug_L, limit_ug_L : array of float
        Result, detection limit and limit [µg/L]; a NaN limit gives ``no_limit``.
    rel_tol : float
        Relative tolerance of "equal" [-] (:data:`~tracescreen.vocabulary.REL_TOL`).
    above_range : array of bool, optional
        Results reported above the calibrated range (``>x``, value x): the true value is at least
        x, so x above the limit is a certain exceedance and x at or below it cannot decide
        (``above_range_inconclusive``).

    Returns
    -------
    numpy.ndarray of int8
    """
    det = np.asarray(detected, dtype=bool)
    lim = np.asarray(limit_ug_L, dtype=float)
    bound = lim * (1.0 + rel_tol)
    compared = np.where(det, np.asarray(value_ug_L, float), np.asarray(detection_limit_ug_L, float))
    with np.errstate(invalid="ignore"):
        over = compared > bound
    del compared, bound
    c = STATUS_CODE
    # (detected, over) -> status, by a table of four (int8 throughout: no wide temporaries)
    table = np.array([c["nondetect_meets"], c["nondetect_inconclusive"], c["meets"], c["exceeds"]], dtype=np.int8)
    pair = np.asarray(det.view(np.int8) * np.int8(2) + over.view(np.int8))
    code = table[pair.ravel()].reshape(pair.shape)
    if above_range is not None:
        code[np.asarray(above_range, dtype=bool) & det & ~over] = c["above_range_inconclusive"]
    code[np.isnan(lim)] = c["no_limit"]
    return code


def classify(detected, value_ug_L, detection_limit_ug_L, limit_ug_L, rel_tol: float = REL_TOL,
             above_range=None) -> np.ndarray:
    """Status of each result against one limit each, as text (see :func:`status_codes`).

    Returns
    -------
    numpy.ndarray of str
        ``exceeds``, ``meets``, ``nondetect_meets``, ``nondetect_inconclusive``,
        ``above_range_inconclusive``, or ``no_limit`` where the limit is NaN.

    Examples
    --------
    >>> classify([True, False, False], [12.0, float("nan"), float("nan")], [1.0, 5.0, 20.0], [10.0, 10.0, 10.0]).tolist()
    ['exceeds', 'nondetect_meets', 'nondetect_inconclusive']
    """
    return np.asarray(STATUSES, dtype=object)[status_codes(detected, value_ug_L, detection_limit_ug_L, limit_ug_L,
                                                           rel_tol, above_range)]


def above_range(results: pd.DataFrame) -> np.ndarray:
    """Results reported above the calibrated range (qualifier meaning ``above_range``, see io/qualifiers)."""
    if "qualifier_meaning" not in results.columns:
        return np.zeros(len(results), dtype=bool)
    from tracescreen.io.qualifiers import has_meaning

    codes, uniq = pd.factorize(results["qualifier_meaning"])  # per distinct text, not per row
    hit = has_meaning(np.asarray(uniq, dtype=object).astype(str), {"above_range"})
    return np.where(codes >= 0, hit[np.maximum(codes, 0)] if len(hit) else False, False)


def statistic_status(value, lower, upper, all_nondetect, limit_ug_L) -> tuple[pd.Categorical, np.ndarray]:
    """Status of statistics over several results (a running mean, a period percentile), vectorised.

    Whatever rule puts non-detects into the statistic, its bounds with non-detects at zero
    (``lower``) and at their detection limit (``upper``) bracket the statistic of the true values,
    and a non-detect is never made into an exceedance [Helsel2012]_:

    - ``exceeds``: ``value`` is above the limit and so is ``lower``;
    - ``nondetect_inconclusive``: ``value`` is above the limit only because of non-detects, or every
      result is a non-detect and ``upper`` is above the limit;
    - ``meets``: ``value`` is at or below the limit;
    - ``nondetect_meets``: every result is a non-detect, ``upper`` at or below the limit.

    Parameters
    ----------
    value, lower, upper : array of float
        The statistic by the table's rule, with non-detects at zero, at their detection limit [µg/L]
        (already rounded where the table rounds).
    all_nondetect : array of bool
        Every result of the statistic is a non-detect (or only "< DL" is known of the statistic).
    limit_ug_L : array of float
        The limit [µg/L]; NaN gives ``no_limit``.

    Returns
    -------
    (status, kind)
        ``status`` a categorical over :data:`~tracescreen.vocabulary.RANKED`; ``kind`` 1 where the
        value is above the limit only because of non-detects, 2 where it meets but ``upper`` would
        not, else 0 (index of the period rules' notes).
    """
    v, lo, up, lim = (np.asarray(a, dtype=float) for a in (value, lower, upper, limit_ug_L))
    all_nd = np.asarray(all_nondetect, dtype=bool)
    bound = lim * (1.0 + REL_TOL)
    with np.errstate(invalid="ignore"):
        over, lo_over, up_over = v > bound, lo > bound, up > bound
    code = {s: RANKED.index(s) for s in ("no_limit", "nondetect_inconclusive", "nondetect_meets", "exceeds", "meets")}
    status = np.select(  # positions in RANKED: the categorical's codes, no text per value
        [np.isnan(lim), all_nd & up_over, all_nd, np.isnan(v), over & lo_over, over],
        [code["no_limit"], code["nondetect_inconclusive"], code["nondetect_meets"], code["no_limit"],
         code["exceeds"], code["nondetect_inconclusive"]], code["meets"]).astype(np.int8)
    mixed = ~all_nd & ~np.isnan(v) & ~np.isnan(lim)
    kind = np.where(mixed & over & ~lo_over, 1, np.where(mixed & ~over & up_over, 2, 0))
    return pd.Categorical.from_codes(status, categories=list(RANKED)), kind


def worst_status(screened: pd.DataFrame, by: list[str]) -> pd.DataFrame:
    """Most severe status per group (severity order :data:`~tracescreen.vocabulary.STATUSES`), with the count of rows.

    For an overview of a site with several uses, where every applicable table gives a row: group
    by result (``["site_id", "sample_id", "analyte", "fraction"]``), by site and analyte, or by site.
    ``worst_limit_table`` and ``worst_ratio`` come from the row that sets the worst status (the
    highest ratio among rows of that status).
    """
    rank = screened["status"].map(STATUS_CODE).astype(int)
    ratio = screened["ratio"] if "ratio" in screened else pd.Series(np.nan, index=screened.index)
    ordered = screened.assign(_rank=rank, _ratio=ratio.fillna(-np.inf)).sort_values(
        ["_rank", "_ratio"], ascending=[True, False], kind="stable")
    g = ordered.groupby(by, observed=True, sort=True)
    out = g.agg(_rank=("_rank", "first"), n_rows=("_rank", "size"),
                worst_limit_table=("limit_table", "first"), worst_ratio=("ratio", "first")).reset_index()
    out.insert(len(by), "worst_status", np.asarray(STATUSES, dtype=object)[out.pop("_rank").to_numpy()])
    return out
