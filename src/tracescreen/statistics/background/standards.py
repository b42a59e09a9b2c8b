"""Each compliance well's confidence limits compared with fixed standards.

For every compliance well, constituent and applicable standard (a limit-table entry with one value
for the well, or a background-based standard) the most recent ``ci_last_n`` compliance values
give one-sided ``ci_level`` confidence limits of the chosen statistic (:mod:`.confidence`). The
method follows the guidance's choices (USEPA 2009, ch. 21-22 [usepa2009]_):

* a significant Mann-Kendall trend: without non-detects the least-squares trend-line band at the
  latest sampling date, and the date its upper limit falls below the standard; with non-detects
  the Akritas-Theil-Sen line and a seeded percentile bootstrap of its value at that date;
* all non-detects: the limits are 0 and the largest detection limit;
* mean: normal (Student's t); lognormal (Land); with non-detects up to 50 %: Kaplan-Meier; else
  the median by order statistics (a mean is not estimated with more than 50 % non-detects);
* median: normal mean, lognormal geometric mean, else order statistics;
* percentile: normal or lognormal (non-central t), else order statistics.

Decisions (:data:`DECISIONS`): for detection and assessment stages, ``exceeds`` when the lower
limit is above the standard (else ``not_shown_to_exceed``); for corrective action, ``meets``
when the upper limit is below it (else ``not_shown_to_meet``). Both are given; ``decision`` is the
one of the well's stage.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 7, 21 and 22.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

from tracescreen.statistics.mann_kendall import mann_kendall_grouped
from tracescreen.statistics.series import date_from_decimal_year, decimal_years
from tracescreen.vocabulary import REL_TOL

from . import confidence as ci
from .checks import choose_distribution
from .data import SERIES
from .design import Design
from .land import land_limit

DECISIONS = ("exceeds", "not_shown_to_exceed", "meets", "not_shown_to_meet")

CI_COLUMNS = SERIES + [
    "stage", "limit_table", "entry_id", "standard_ug_L", "standard_basis", "n", "n_nondetect",
    "first_sampled", "last_sampled", "parameter", "method", "estimate_ug_L", "lcl_ug_L", "ucl_ug_L",
    "confidence", "achieved_confidence", "trend_p", "ucl_below_standard_from",
    "assessment_decision", "corrective_decision", "decision", "ci_notes"]


def standards_for_series(screened: pd.DataFrame, series: pd.DataFrame) -> pd.DataFrame:
    """Applicable standards per compliance series from the screening output: one row per
    (series, limit table, entry) with the entry's value (the lowest where it varies, e.g. with
    hardness, with a note)."""
    if screened is None or screened.empty:
        return pd.DataFrame(columns=SERIES + ["limit_table", "entry_id", "standard_ug_L", "standard_basis"])
    s = screened[screened["limit_ug_L"].notna()]
    s = s[s["sample_type"].astype(str) == "sample"] if "sample_type" in s else s
    if "limit_fraction" in s:  # a standard of the series' own fraction (no cross-fraction decisions here)
        lf = s["limit_fraction"].astype(str)
        s = s[(lf == s["fraction"].astype(str)) | (lf == "") | s["limit_fraction"].isna()]
    keys = SERIES + ["limit_table", "entry_id"]
    frame = pd.DataFrame({k: s[k].astype(str).to_numpy() for k in keys})
    frame["limit_ug_L"] = s["limit_ug_L"].to_numpy(float)
    g = frame.groupby(keys, sort=True)["limit_ug_L"]
    out = pd.DataFrame({"standard_ug_L": g.min(), "varies": g.max() > g.min()}).reset_index()
    out["standard_basis"] = np.where(out["varies"], "table (lowest value; it varies between samples)", "table")
    return out.merge(series[SERIES], on=SERIES).drop(columns="varies")


def _window(rows: pd.DataFrame, last_n: int) -> pd.DataFrame:
    comp = rows[rows["period"] == "compliance"].sort_values(SERIES + ["sampled_at"], kind="stable")
    pos_from_end = comp.groupby(SERIES, sort=False).cumcount(ascending=False)
    return comp[pos_from_end < last_n]


def confidence_limits(rows: pd.DataFrame, series: pd.DataFrame, standards: pd.DataFrame,
                      design: Design) -> pd.DataFrame:
    """Confidence limits of each compliance series, compared with each of its standards.

    Returns
    -------
    DataFrame
        One row per (series, standard) with :data:`CI_COLUMNS`.
    """
    win = _window(rows, design.ci_last_n).reset_index(drop=True)
    if win.empty or standards.empty:
        return pd.DataFrame(columns=CI_COLUMNS)
    codes = win.groupby(SERIES, sort=True).ngroup().to_numpy()
    keys = win[SERIES].drop_duplicates().sort_values(SERIES).reset_index(drop=True)
    t = decimal_years(win["sampled_at"])
    trend = mann_kendall_grouped(t, win["value"].to_numpy(float), win["nondetect"].to_numpy(bool),
                                 codes, len(keys), alpha=design.alpha_checks)
    stats_rows = [_one_series(t[codes == i], win.loc[codes == i], trend.at[i, "p_value"], design)
                  for i in range(len(keys))]  # one pass per series, never per result
    per = pd.concat([keys, pd.DataFrame(stats_rows)], axis=1)
    out = standards.merge(per, on=SERIES).merge(series[SERIES + ["stage"]], on=SERIES)
    std = out["standard_ug_L"].to_numpy(float) * (1 + REL_TOL)
    lcl, ucl = out["lcl_ug_L"].to_numpy(float), out["ucl_ug_L"].to_numpy(float)
    out["assessment_decision"] = np.where(lcl > std, "exceeds", "not_shown_to_exceed")
    out["corrective_decision"] = np.where(ucl < out["standard_ug_L"].to_numpy(float) / (1 + REL_TOL),
                                          "meets", "not_shown_to_meet")
    out.loc[~np.isfinite(lcl), "assessment_decision"] = "not_shown_to_exceed"
    out.loc[~np.isfinite(ucl), "corrective_decision"] = "not_shown_to_meet"
    out["decision"] = np.where(out["stage"] == "corrective", out["corrective_decision"], out["assessment_decision"])
    band = out.pop("band")
    out["ucl_below_standard_from"] = [
        _crossing(b, s) for b, s in zip(band, out["standard_ug_L"].to_numpy(float))]
    return out[CI_COLUMNS].sort_values(SERIES + ["limit_table", "entry_id"]).reset_index(drop=True)


def _crossing(band, standard):
    """Date from which the trend band's upper limit stays below the standard (NaT if never
    within the sampled period or no band)."""
    if band is None:
        return pd.NaT
    grid = np.linspace(band["t0"], band["t1"], 400)
    upper = band["fit"](grid)
    below = upper < standard
    if not below[-1]:
        return pd.NaT
    first = len(below) - int(np.argmin(below[::-1])) if not below.all() else 0
    return date_from_decimal_year([grid[min(first, len(grid) - 1)]])[0]


def _one_series(t: np.ndarray, w: pd.DataFrame, trend_p: float, design: Design) -> dict:
    x, nd = w["value"].to_numpy(float), w["nondetect"].to_numpy(bool)
    n, n_nd = len(x), int(nd.sum())
    level, param = design.ci_level, design.ci_parameter
    res = {"n": n, "n_nondetect": n_nd, "first_sampled": w["sampled_at"].min(), "last_sampled": w["sampled_at"].max(),
           "parameter": param if param != "percentile" else f"p{round(design.ci_percentile * 100):g}",
           "method": "", "estimate_ug_L": np.nan, "lcl_ug_L": np.nan, "ucl_ug_L": np.nan,
           "confidence": level, "achieved_confidence": np.nan, "trend_p": trend_p, "band": None, "ci_notes": ""}
    if n < 3:
        return {**res, "method": "none", "ci_notes": f"only {n} compliance values (at least 3 needed)"}
    if n_nd == n:
        return {**res, "method": "all_nondetect", "lcl_ug_L": 0.0, "ucl_ug_L": float(x.max()),
                "ci_notes": "every value is a non-detect: the statistic is below the largest detection limit"}
    if np.isfinite(trend_p) and trend_p < design.alpha_checks and n_nd == 0 and n >= 4:
        b = ci.trend_band(t, x, [t.max()], level)
        band_fn = {"t0": t.min(), "t1": t.max(),
                   "fit": lambda tt, b=b, t=t, x=x: ci.trend_band(t, x, tt, level)["upper"]}
        return {**res, "method": "trend_line_band", "estimate_ug_L": float(b["fit"][0]),
                "lcl_ug_L": float(b["lower"][0]), "ucl_ug_L": float(b["upper"][0]), "band": band_fn,
                "ci_notes": f"significant trend (Mann-Kendall p = {trend_p:.3g}): limits of the trend line "
                            f"at the latest sampling date; slope {b['slope']:.4g} µg/L per year"}
    if np.isfinite(trend_p) and trend_p < design.alpha_checks and n >= 4:
        return {**res, **_censored_trend_band(t, x, nd, w, level, trend_p)}
    pct = 100.0 * n_nd / n
    p_raw = stats.shapiro(x).pvalue if n_nd == 0 and np.ptp(x) > 0 else np.nan
    p_log = stats.shapiro(np.log(x)).pvalue if n_nd == 0 and np.ptp(x) > 0 and (x > 0).all() else np.nan
    dist = choose_distribution(p_raw, p_log, pct, n - n_nd, design.alpha_checks)
    if n_nd:
        dist = "kaplan_meier" if pct <= 50 and param == "mean" else "nonparametric"
    y = np.log(x) if dist == "lognormal" else x
    m, s = float(np.mean(y)), float(np.std(y, ddof=1))
    lo_hi = {}
    if param == "percentile" and dist in ("normal", "lognormal"):
        for side in ("lower", "upper"):
            lo_hi[side] = float(ci.percentile_limit_normal(m, s, n, design.ci_percentile, level, side))
        est = m + stats.norm.ppf(design.ci_percentile) * s
        method = f"{dist}_percentile"
    elif dist == "normal":
        for side in ("lower", "upper"):
            lo_hi[side] = float(ci.mean_limit_normal(m, s, n, level, side))
        est, method = m, "normal_mean"
    elif dist == "lognormal" and param == "mean":
        lo_hi = {"lower": float(np.log(land_limit(m, s, n, 1 - level)[0])),
                 "upper": float(np.log(land_limit(m, s, n, level)[0]))}
        est, method = m + s * s / 2, "lognormal_mean_land"
    elif dist == "lognormal":
        for side in ("lower", "upper"):
            lo_hi[side] = float(ci.mean_limit_normal(m, s, n, level, side))
        est, method = m, "geometric_mean"
    elif dist == "kaplan_meier":
        est, se = ci.kaplan_meier_mean_se(x, nd)
        q = stats.t.ppf(level, n - 1)
        lo_hi = {"lower": est - q * se, "upper": est + q * se}
        method = "kaplan_meier_mean"
    else:
        return {**res, **_order_statistics(x, nd, design, param, pct)}
    log = dist == "lognormal"
    back = np.exp if log else (lambda v: v)
    return {**res, "method": method, "estimate_ug_L": float(back(est)), "lcl_ug_L": float(back(lo_hi["lower"])),
            "ucl_ug_L": float(back(lo_hi["upper"])), "achieved_confidence": level}


def _order_statistics(x, nd, design, param, pct):
    p = design.ci_percentile if param == "percentile" else 0.5
    n = len(x)
    order = np.argsort(x, kind="stable")
    (lr,), (lc,) = ci.order_statistic_rank([n], p, design.ci_level, "lower")
    (ur,), (uc,) = ci.order_statistic_rank([n], p, design.ci_level, "upper")
    lcl = 0.0 if nd[order[lr - 1]] else float(x[order[lr - 1]])
    ucl = float(x[order[ur - 1]])
    notes = [f"order statistics: lower limit = value {lr} of {n} (confidence {lc:.3g}), "
             f"upper limit = value {ur} of {n} (confidence {uc:.3g})"]
    if param == "mean":
        why = f"{pct:.0f} % non-detects" if pct > 50 else "neither the values nor their logarithms pass Shapiro-Wilk"
        notes.insert(0, f"mean not estimated ({why}): median used")
    if nd[order[lr - 1]]:
        notes.append("the lower limit is a non-detect: taken as 0")
    return {"method": "nonparametric_" + ("median" if p == 0.5 else "percentile"),
            "estimate_ug_L": float(np.quantile(x, p)) if not nd.any() else np.nan,
            "lcl_ug_L": lcl, "ucl_ug_L": ucl, "achieved_confidence": float(min(lc, uc)),
            "ci_notes": "; ".join(notes)}


#: Resamples and seed of the bootstrap band around a censored trend line (each series also seeded
#: by its identity, so its band does not depend on the other series in the run).
TREND_BOOTSTRAP, TREND_SEED = 500, 20090301


def _censored_trend_band(t, x, nd, w, level, trend_p) -> dict:
    """Akritas-Theil-Sen line and a percentile-bootstrap band of its value at the latest date, for a
    trend with non-detects (least squares cannot use them; the guidance's Example 21-8 draws a
    bootstrap band around a Theil-Sen line)."""
    from tracescreen.statistics.bootstrap import series_seed_keys

    key = int(series_seed_keys(w[SERIES].iloc[:1])[0])
    rng = np.random.default_rng([TREND_SEED, key & 0xFFFFFFFF, key >> 32])
    n = len(x)
    pick = rng.integers(0, n, (TREND_BOOTSTRAP, n))
    codes = np.repeat(np.arange(TREND_BOOTSTRAP + 1), n)
    idx = np.concatenate([np.arange(n), pick.ravel()])
    fits = mann_kendall_grouped(t[idx], x[idx], nd[idx], codes, TREND_BOOTSTRAP + 1, force_ats=True)
    at_last = (fits["intercept"] + fits["slope_per_year"] * (t.max() - fits["t0"])).to_numpy(float)
    boot = at_last[1:][np.isfinite(at_last[1:])]
    lo, hi = (np.quantile(boot, [1 - level, level]) if len(boot) >= 20 else (np.nan, np.nan))
    return {"method": "censored_trend_line_bootstrap", "estimate_ug_L": float(at_last[0]),
            "lcl_ug_L": float(lo), "ucl_ug_L": float(hi),
            "ci_notes": f"significant trend with non-detects (Mann-Kendall p = {trend_p:.3g}): Akritas-Theil-Sen "
                        f"line ({fits.at[0, 'slope_per_year']:.4g} µg/L per year) and a percentile bootstrap of its "
                        f"value at the latest sampling date ({TREND_BOOTSTRAP} resamples, seeded)"}
