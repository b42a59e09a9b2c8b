"""Checks the guidance asks for before a background limit is computed, and the choices they make.

For each background set (a well group's background wells for one constituent, or one compliance
well's own baseline) (USEPA 2009, ch. 5, 10-15 and 19 [usepa2009]_):

* **size**: at least ``min_background`` values (8 by default; the CCR rule asks for 8) -- warned
  below;
* **non-detects**: their share decides the method: all non-detects -> the Double Quantification
  Rule; more than 50 % -> a non-parametric limit; otherwise Kaplan-Meier mean and standard
  deviation (Helsel 2012 [helsel2012]_) in a parametric limit;
* **distribution**: Shapiro-Wilk on the values and on their logarithms (with non-detects, on the
  ROS-imputed set, Helsel 2012 ch. 7): normal if the values pass, else lognormal if the logarithms
  pass, else non-parametric;
* **outliers**: Dixon's or Rosner's test on the detected values, on the chosen scale
  (:mod:`.outliers`) -- reported, not removed;
* **trend**: Mann-Kendall test (censored; :mod:`tracescreen.statistics.trends`) -- background
  with a trend is not stationary and is warned.

:func:`spatial_variability` tests whether background wells of a group differ (one-way ANOVA on
the chosen scale; Kruskal-Wallis when more than 15 % are non-detects, non-detects ranked as ties
below the detected values) to choose interwell or intrawell limits; :func:`pooled_sd` pools
intrawell standard deviations when Levene's test finds equal variances (Example 19-2).

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 5, 10-15 and 19.
.. [helsel2012] Helsel, D.R. (2012). Statistics for Censored Environmental Data Using Minitab
   and R, 2nd ed. Wiley.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

from tracescreen.statistics import censored
from tracescreen.statistics.mann_kendall import mann_kendall_grouped
from tracescreen.statistics.ros import ros
from tracescreen.statistics.series import decimal_years

from .design import Design
from .outliers import screen_outliers

#: Above this share of non-detects (percent) a non-parametric limit is used (USEPA 2009, ch. 15).
NONPARAMETRIC_ABOVE = 50.0
#: Above this share the spatial test ranks (Kruskal-Wallis) instead of ANOVA (common practice).
RANKS_ABOVE = 15.0

SET_COLUMNS = ["n", "n_detected", "percent_nondetect", "n_wells", "first_sampled", "last_sampled",
               "enough_values", "shapiro_w", "shapiro_p", "shapiro_log_w", "shapiro_log_p",
               "distribution", "nd_method", "mean", "sd", "outlier_test", "outlier_statistic",
               "outlier_critical", "outliers", "trend_s", "trend_p", "trend", "max_value", "max_nondetect",
               "check_notes"]


def _shapiro(x: np.ndarray) -> tuple[float, float]:
    if len(x) < 3 or np.ptp(x) == 0:
        return np.nan, np.nan
    r = stats.shapiro(x)
    return float(r.statistic), float(r.pvalue)


def _complete_set(x: np.ndarray, nd: np.ndarray) -> np.ndarray:
    """Values to test the distribution on: the values, or the ROS-imputed set with non-detects."""
    if not nd.any():
        return x
    try:
        return np.asarray(ros(x, nd), dtype=float)
    except (ValueError, np.linalg.LinAlgError):
        return x[~nd]


def choose_distribution(p_raw: float, p_log: float, percent_nd: float, n_detected: int,
                        alpha: float) -> str:
    """``dqr`` (never detected), ``nonparametric``, ``normal`` or ``lognormal``."""
    if n_detected == 0:
        return "dqr"
    if percent_nd > NONPARAMETRIC_ABOVE or not np.isfinite(p_raw):
        return "nonparametric"
    if p_raw >= alpha:
        return "normal"
    if np.isfinite(p_log) and p_log >= alpha:
        return "lognormal"
    return "nonparametric"


def describe_sets(rows: pd.DataFrame, codes: np.ndarray, n_sets: int, design: Design) -> pd.DataFrame:
    """Checks and statistics of every background set.

    Parameters
    ----------
    rows : DataFrame
        Background rows (``site_id, sampled_at, value, nondetect``).
    codes : ndarray of int
        Set code of each row (0 .. n_sets - 1).

    Returns
    -------
    DataFrame
        One row per set code with :data:`SET_COLUMNS`; ``mean`` and ``sd`` are on the chosen
        scale (natural logarithms of µg/L for ``lognormal``).
    """
    out = {c: [None] * n_sets for c in SET_COLUMNS}
    t = decimal_years(rows["sampled_at"])
    trend = mann_kendall_grouped(t, rows["value"].to_numpy(float), rows["nondetect"].to_numpy(bool),
                                 codes, n_sets, alpha=design.alpha_checks)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(n_sets + 1))
    x_all, nd_all = rows["value"].to_numpy(float)[order], rows["nondetect"].to_numpy(bool)[order]
    wells, dates = rows["site_id"].to_numpy()[order], rows["sampled_at"].to_numpy()[order]
    for i in range(n_sets):  # one pass per background set (not per row)
        sl = slice(bounds[i], bounds[i + 1])
        x, nd = x_all[sl], nd_all[sl]
        n, n_det = len(x), int((~nd).sum())
        pct = 100.0 * (n - n_det) / n if n else np.nan
        notes = []
        full = _complete_set(x, nd) if n_det >= 3 else x[~nd]
        w_raw, p_raw = _shapiro(full)
        w_log, p_log = _shapiro(np.log(full[full > 0])) if (full > 0).all() else (np.nan, np.nan)
        dist = choose_distribution(p_raw, p_log, pct, n_det, design.alpha_checks)
        scale = np.log(x) if dist == "lognormal" else x
        if dist in ("normal", "lognormal"):
            if nd.any():
                km = censored.kaplan_meier(scale, nd)
                mean, sd, nd_method = km["mean"], km["sd"], "kaplan_meier"
            else:
                mean, sd, nd_method = scale.mean(), scale.std(ddof=1) if n > 1 else np.nan, "none"
        else:
            mean, sd, nd_method = np.nan, np.nan, "order_statistic" if dist == "nonparametric" else "dqr"
        o = screen_outliers(scale[~nd], design.alpha_checks) if pct <= NONPARAMETRIC_ABOVE else \
            {"test": "", "statistic": np.nan, "critical": np.nan, "outliers": []}
        flagged = [float(np.exp(v)) if dist == "lognormal" else float(v) for v in o["outliers"]]
        if n < design.min_background:
            notes.append(f"only {n} background values (at least {design.min_background} needed)")
        if flagged:
            notes.append("possible outlier(s) " + ", ".join(f"{v:.4g}" for v in flagged)
                         + ": check the records; kept unless an error is documented")
        tp = trend.at[i, "p_value"]
        direction = "none"
        if np.isfinite(tp) and tp < design.alpha_checks and n >= 4:
            direction = "increasing" if trend.at[i, "s"] > 0 else "decreasing"
            notes.append(f"{direction} trend in background (Mann-Kendall p = {tp:.3g}): background is not stationary")
        if dist == "nonparametric" and pct <= NONPARAMETRIC_ABOVE:
            notes.append("neither the values nor their logarithms pass Shapiro-Wilk")
        vals = {"n": n, "n_detected": n_det, "percent_nondetect": pct,
                "n_wells": len(np.unique(wells[sl])), "first_sampled": dates[sl].min() if n else pd.NaT,
                "last_sampled": dates[sl].max() if n else pd.NaT, "enough_values": n >= design.min_background,
                "shapiro_w": w_raw, "shapiro_p": p_raw, "shapiro_log_w": w_log, "shapiro_log_p": p_log,
                "distribution": dist, "nd_method": nd_method, "mean": mean, "sd": sd,
                "outlier_test": o["test"], "outlier_statistic": o["statistic"], "outlier_critical": o["critical"],
                "outliers": "; ".join(f"{v:.4g}" for v in flagged), "trend_s": trend.at[i, "s"],
                "trend_p": tp, "trend": direction, "max_value": float(x.max()) if n else np.nan,
                "max_nondetect": bool(nd[np.argmax(x)]) if n else False, "check_notes": "; ".join(notes)}
        for c in SET_COLUMNS:
            out[c][i] = vals[c]
    return pd.DataFrame(out)


def spatial_variability(values: np.ndarray, nondetect: np.ndarray, wells: np.ndarray,
                        log_scale: bool) -> dict:
    """Test whether background wells differ: one-way ANOVA, or Kruskal-Wallis with many non-detects.

    Returns
    -------
    dict
        ``test`` ("anova", "kruskal_wallis" or "" when fewer than 2 wells with 2+ values),
        ``statistic``, ``p_value``, ``n_wells``.
    """
    labels, inv = np.unique(wells, return_inverse=True)
    counts = np.bincount(inv, minlength=len(labels))
    keep = counts[inv] >= 2
    if (counts >= 2).sum() < 2:
        return {"test": "", "statistic": np.nan, "p_value": np.nan, "n_wells": int((counts >= 2).sum())}
    x, nd, g = values[keep], nondetect[keep], inv[keep]
    if 100.0 * nd.mean() > RANKS_ABOVE:
        ranked = np.where(nd, np.min(x) - 1.0, x)   # non-detects tie below every detect
        groups = [ranked[g == k] for k in np.unique(g)]
        if np.ptp(ranked) == 0:
            return {"test": "kruskal_wallis", "statistic": 0.0, "p_value": 1.0, "n_wells": len(groups)}
        r = stats.kruskal(*groups)
        return {"test": "kruskal_wallis", "statistic": float(r.statistic), "p_value": float(r.pvalue),
                "n_wells": len(groups)}
    y = np.log(x) if log_scale else x
    groups = [y[g == k] for k in np.unique(g)]
    r = stats.f_oneway(*groups)
    return {"test": "anova", "statistic": float(r.statistic), "p_value": float(r.pvalue), "n_wells": len(groups)}


def pooled_sd(groups: list[np.ndarray], alpha: float) -> dict:
    """Pooled standard deviation of several wells' baselines if Levene's test (deviations from the
    well means) finds no difference in variances at ``alpha`` (USEPA 2009, Example 19-2).

    Returns
    -------
    dict
        ``levene_p``, ``pooled`` (bool), ``sd`` (pooled SD, the root mean square error of a one-way
        ANOVA), ``df`` (sum of n_i - 1).
    """
    usable = [g for g in groups if len(g) >= 2]
    if len(usable) < 2:
        return {"levene_p": np.nan, "pooled": False, "sd": np.nan, "df": np.nan}
    if all(np.ptp(g) == 0 for g in usable):
        p = 1.0
    else:
        p = float(stats.levene(*usable, center="mean").pvalue)
    ss = sum(float(((g - g.mean()) ** 2).sum()) for g in usable)
    df = sum(len(g) - 1 for g in usable)
    return {"levene_p": p, "pooled": bool(p >= alpha), "sd": float(np.sqrt(ss / df)), "df": float(df)}
