"""Status of each compliance well and constituent over its retest sequence.

Compliance results are read in time order and grouped into *compared values*: single results,
or the mean (parametric limits; geometric mean for lognormal limits) or median (non-parametric)
of ``order`` consecutive results. Each compared value is ``within`` the limit, ``above`` it, or
``inconclusive`` (a non-detect whose detection limit is above the limit: a non-detect is never an
exceedance, but it cannot show the value is within either). Under the Double Quantification Rule
a value is ``above`` when it is quantified (detected and not estimated).

An evaluation starts with a value; under the plan (:mod:`.plans`) it ends as soon as it passes or
fails, and the values in between are its resamples (USEPA 2009, ch. 19 [usepa2009]_). Statuses:

``within``                the evaluation passed on its first value
``initial_exceedance``    the first value is above the limit: a resample is required
``resample_required``     a resample did not decide yet: another is required
``not_confirmed``         the evaluation passed on a resample (no statistically significant increase)
``confirmed_exceedance``  the evaluation failed: a statistically significant increase over background
``inconclusive``          a non-detect above the limit, or an incomplete mean/median of ``order``
``resample_missing``      (summary only) no resample came before the next routine evaluation

A resample must come within one evaluation interval (a year / evaluations per year) of the
evaluation's first value; otherwise the evaluation is closed as ``resample_missing`` and the value
starts a new evaluation. The loop runs over positions in the sequences, vectorised across
series.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 6 (§6.2.2) and 19.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import REL_TOL

from .data import SERIES
from .plans import FAILED, PASSED, RULES, UNDECIDED, decide

STATUSES = ("within", "initial_exceedance", "resample_required", "not_confirmed",
            "confirmed_exceedance", "inconclusive")
WITHIN, INITIAL, RESAMPLE, NOT_CONFIRMED, CONFIRMED, INCONCLUSIVE = range(6)
COMPARISONS = ("within", "above", "inconclusive")

SEQUENCE_COLUMNS = SERIES + ["evaluation", "position", "first_sampled", "sampled_at", "n_results",
                             "compared_value_ug_L", "nondetect", "limit_ug_L", "method", "plan",
                             "comparison", "status", "note"]


def _compared_values(comp: pd.DataFrame) -> pd.DataFrame:
    """One row per compared value (block of ``order`` consecutive results of a series)."""
    order = comp["order"].to_numpy()
    pos = comp.groupby("series_code", sort=False).cumcount().to_numpy()
    comp = comp.assign(block=pos // order)
    log = comp["log_scale"].to_numpy()
    x = comp["value"].to_numpy(float)
    nd = comp["nondetect"].to_numpy(bool)
    with np.errstate(divide="ignore"):
        upper = np.where(log, np.log(x), x)
        lower = np.where(nd, np.where(log, -np.inf, 0.0), upper)
    comp = comp.assign(upper=upper, lower=lower)
    g = comp.groupby(["series_code", "block"], sort=True)
    agg = g.agg(first_sampled=("sampled_at", "first"), sampled_at=("sampled_at", "last"),
                n_results=("value", "size"), order=("order", "first"), nondetect=("nondetect", "any"),
                quantified=("quantified", "all"), log_scale=("log_scale", "first"),
                median=("median", "first"), mean_u=("upper", "mean"), mean_l=("lower", "mean"),
                med_u=("upper", "median"), med_l=("lower", "median"))
    up = np.where(agg["median"], agg["med_u"], agg["mean_u"])
    lo = np.where(agg["median"], agg["med_l"], agg["mean_l"])
    ls = agg["log_scale"].to_numpy(bool)
    agg["upper"] = np.where(ls, np.exp(up), up)
    agg["lower"] = np.where(ls, np.exp(lo), lo)
    return agg.reset_index()


def evaluate_sequences(rows: pd.DataFrame, limits: pd.DataFrame, interval_days: float) -> dict[str, pd.DataFrame]:
    """Statuses of every compliance series under its limit and plan.

    Parameters
    ----------
    rows : DataFrame
        :func:`.data.monitoring_rows` (the ``compliance`` period is used).
    limits : DataFrame
        :func:`.prediction.prediction_limits` ``["limits"]``.
    interval_days : float
        Days allowed between an evaluation's first value and its resamples.

    Returns
    -------
    dict
        ``sequence`` (one row per compared value, :data:`SEQUENCE_COLUMNS`) and ``summary`` (one
        row per series: evaluations, initial exceedances, confirmed exceedances, latest status).
    """
    lim = limits[limits["plan_object"].notna()].reset_index(drop=True)
    comp = rows[rows["period"] == "compliance"].merge(
        lim[SERIES + ["limit_ug_L", "distribution", "method", "plan", "plan_object"]], on=SERIES, how="inner")
    if comp.empty:
        return {"sequence": pd.DataFrame(columns=SEQUENCE_COLUMNS), "summary": _summary(lim, None)}
    comp = comp.sort_values(SERIES + ["sampled_at"], kind="stable").reset_index(drop=True)
    comp["series_code"] = comp.groupby(SERIES, sort=False).ngroup()
    plans = comp["plan_object"].to_numpy()
    comp["order"] = [p.order for p in plans]
    comp["log_scale"] = comp["distribution"].to_numpy() == "lognormal"
    comp["median"] = comp["method"].to_numpy() == "nonparametric"
    blocks = _compared_values(comp)
    first = comp.groupby("series_code", sort=True).first()
    code = blocks["series_code"].to_numpy()
    limit = first["limit_ug_L"].to_numpy(float)[code]
    dqr = (first["method"].to_numpy() == "double_quantification")[code]
    complete = blocks["n_results"].to_numpy() == blocks["order"].to_numpy()
    tol = limit * (1 + REL_TOL)
    within = np.where(dqr, ~blocks["quantified"].to_numpy(bool), blocks["upper"].to_numpy() <= tol)
    above = np.where(dqr, blocks["quantified"].to_numpy(bool), blocks["lower"].to_numpy() > tol)
    cmp = np.where(within & complete, 0, np.where(above & complete, 1, 2))
    plan_of = first["plan_object"].to_numpy()
    rule = np.array([RULES.index(p.rule) for p in plan_of])
    k = np.array([p.k for p in plan_of])
    m = np.array([p.m for p in plan_of])
    pos = blocks["block"].to_numpy()
    g, L = len(first), int(pos.max()) + 1
    cmp2 = np.full((g, L), -1)
    cmp2[code, pos] = cmp
    t2 = np.zeros((g, L))
    t2[code, pos] = (blocks["first_sampled"].to_numpy().astype("datetime64[ns]").astype(np.int64) / 8.64e13)
    status, ev, ev_pos, missing, closed = _run(cmp2, t2, rule, k, m, interval_days)
    blocks["status"] = np.array(STATUSES, dtype=object)[status[code, pos]]
    blocks["evaluation"] = ev[code, pos]
    blocks["position"] = ev_pos[code, pos]
    blocks["comparison"] = np.array(COMPARISONS, dtype=object)[cmp]
    blocks["note"] = np.where(closed[code, pos], f"no resample within {interval_days:.0f} days of the previous "
                              "evaluation's first value: that evaluation is closed as resample_missing", "")
    keys = first.reset_index()[["series_code"] + SERIES + ["method", "plan"]]
    seq = blocks.merge(keys, on="series_code").assign(limit_ug_L=limit, compared_value_ug_L=blocks["upper"])
    seq = seq.sort_values(SERIES + ["block"])[SEQUENCE_COLUMNS].reset_index(drop=True)
    return {"sequence": seq, "summary": _summary(lim, seq, dict(zip(first.index, missing)), keys)}


def _run(cmp, t, rule, k, m, interval_days):
    """The state machine over positions j, vectorised across series (rows of the 2-D arrays)."""
    g, L = cmp.shape
    status = np.full((g, L), INCONCLUSIVE)
    ev = np.zeros((g, L), int)
    ev_pos = np.zeros((g, L), int)
    pending = np.zeros(g, bool)
    first_failed = np.zeros(g, bool)
    n_pass = np.zeros(g, int)
    n_fail = np.zeros(g, int)
    pos = np.zeros(g, int)
    start = np.zeros(g)
    count = np.zeros(g, int)
    missing = np.zeros(g, int)
    closed = np.zeros((g, L), bool)
    for j in range(L):
        c = cmp[:, j]
        exists = c >= 0
        late = pending & exists & (t[:, j] - start > interval_days)
        missing += late
        closed[:, j] = late
        pending &= ~late
        decisive = exists & (c != 2)
        new = decisive & ~pending
        count += new
        start = np.where(new, t[:, j], start)
        first_failed = np.where(new, c == 1, first_failed)
        n_pass = np.where(new, 0, n_pass) + (decisive & (c == 0))
        n_fail = np.where(new, 0, n_fail) + (decisive & (c == 1))
        pos = np.where(new, 1, pos + (decisive & pending))
        out = decide(rule, k, m, first_failed, n_pass, n_fail)
        st = np.where(out == PASSED, np.where(pos == 1, WITHIN, NOT_CONFIRMED),
                      np.where(out == FAILED, CONFIRMED, np.where(pos == 1, INITIAL, RESAMPLE)))
        status[:, j] = np.where(decisive, st, INCONCLUSIVE)
        ev[:, j] = np.where(exists, count, 0)
        ev_pos[:, j] = np.where(decisive, pos, 0)
        pending = np.where(decisive, out == UNDECIDED, pending)
    return status, ev, ev_pos, missing, closed


SUMMARY_COLUMNS = SERIES + ["n_compared_values", "n_evaluations", "n_initial_exceedances",
                            "n_confirmed_exceedances", "n_resamples_missing", "latest_status",
                            "latest_sampled"]


def _summary(lim, seq, missing=None, keys=None) -> pd.DataFrame:
    base = lim[SERIES].copy()
    if seq is None or seq.empty:
        return base.assign(n_compared_values=0, n_evaluations=0, n_initial_exceedances=0,
                           n_confirmed_exceedances=0, n_resamples_missing=0,
                           latest_status="no_compliance_data", latest_sampled=pd.NaT)[SUMMARY_COLUMNS]
    flags = seq.assign(initial=seq["status"].eq("initial_exceedance"),
                       confirmed=seq["status"].eq("confirmed_exceedance"))
    g = flags.groupby(SERIES, sort=True)
    decisive = flags[flags["status"] != "inconclusive"].groupby(SERIES, sort=True)
    s = pd.DataFrame({
        "n_compared_values": g.size(),
        "n_evaluations": g["evaluation"].max(),
        "n_initial_exceedances": g["initial"].sum(),
        "n_confirmed_exceedances": g["confirmed"].sum(),
        "latest_status": decisive["status"].last(),
        "latest_sampled": g["sampled_at"].max(),
    }).reset_index()
    miss = keys.assign(n_resamples_missing=keys["series_code"].map(missing).fillna(0).astype(int))[SERIES + ["n_resamples_missing"]]
    out = base.merge(s, on=SERIES, how="left").merge(miss, on=SERIES, how="left")
    out["latest_status"] = out["latest_status"].fillna("inconclusive")
    out.loc[out["n_compared_values"].isna(), "latest_status"] = "no_compliance_data"
    for c in ("n_compared_values", "n_evaluations", "n_initial_exceedances", "n_confirmed_exceedances",
              "n_resamples_missing"):
        out[c] = out[c].fillna(0).astype(int)
    return out[SUMMARY_COLUMNS]
