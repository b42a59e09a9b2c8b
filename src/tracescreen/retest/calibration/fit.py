"""Calibration curves: weighted least-squares lines fitted to every curve at once.

A curve is one analyte in one run: standards of known concentration x (µg/L) and their responses y
(absorbance, counts). The line y = a + b·x minimises Σ w (y − a − b·x)², closed form from the
weighted sums of each curve (one pass of ``numpy.bincount`` over all points, no per-curve loop):

    b = (Sw·Swxy − Swx·Swy) / (Sw·Swxx − Swx²),   a = (Swy − b·Swx) / Sw

with weights w = 1 (ordinary least squares), 1/x or 1/x² (zero-concentration points get the weight
of the lowest non-zero standard). Reported per curve: slope, intercept, weighted correlation r,
residual standard deviation s = √(Σ w e² / (n − 2)) (σ of the fit, in response units at unit
weight), standard errors of slope and intercept, and per point the residual, the back-calculated
concentration (y − a)/b and its percent error.

Weighting ``auto``: 1/x² when the responses of replicated standards spread more at the highest level
than at the lowest (one-sided F test of the two variances at α = 0.05), otherwise none [1]_.

Lack of fit (replicated levels only): the residual sum of squares splits into pure error (scatter
of replicates about their level's mean, n − k degrees of freedom) and lack of fit (k − 2);
F = (SS_lof / (k − 2)) / (SS_pe / (n − k)) [2]_. A small p-value says a straight line does not fit.

References
----------
.. [1] Almeida, A.M., Castel-Branco, M.M., Falcão, A.C. (2002). Linear regression for calibration
   lines revisited: weighting schemes for bioanalytical methods. J. Chromatogr. B 774, 215-222
   (the F test of the extreme levels' variances; from memory).
.. [2] Draper, N.R., Smith, H. (1998). Applied Regression Analysis, 3rd ed., Wiley, section 2.1
   (lack of fit and pure error; from memory).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

FIT_COLUMNS = ["analyte", "run", "weighting", "n", "levels", "slope", "intercept", "r", "residual_sd",
               "se_slope", "se_intercept", "lack_of_fit_F", "lack_of_fit_df1", "lack_of_fit_df2", "lack_of_fit_p",
               "lowest_standard_ug_L", "highest_standard_ug_L", "max_abs_back_calc_error_pct"]
WEIGHTINGS = ("none", "1/x", "1/x2", "auto")


def _sums(g: np.ndarray, k: int, *arrays) -> list[np.ndarray]:
    return [np.bincount(g, weights=a, minlength=k) for a in arrays]


def _weights(g: np.ndarray, k: int, x: np.ndarray, weighting: np.ndarray) -> np.ndarray:
    """Weights per point from each curve's weighting; x = 0 takes the lowest non-zero standard."""
    pos = np.where(x > 0, x, np.inf)
    low = np.full(k, np.inf)
    np.minimum.at(low, g, pos)
    xe = np.where(x > 0, x, low[g])
    wt = weighting[g]
    with np.errstate(divide="ignore"):
        return np.select([wt == "1/x", wt == "1/x2"], [1.0 / xe, 1.0 / xe ** 2], 1.0)


def auto_weighting(g: np.ndarray, k: int, x: np.ndarray, y: np.ndarray, alpha: float = 0.05) -> np.ndarray:
    """``1/x2`` for curves whose highest replicated level spreads more than the lowest (F test), else ``none``."""
    pts = pd.DataFrame({"g": g, "x": x, "y": y})
    lv = pts[pts["x"] > 0].groupby(["g", "x"])["y"].agg(["var", "count"]).reset_index()
    lv = lv[lv["count"] >= 2]
    out = np.full(k, "none", dtype=object)
    if lv.empty:
        return out
    lo = lv.loc[lv.groupby("g")["x"].idxmin()].set_index("g")
    hi = lv.loc[lv.groupby("g")["x"].idxmax()].set_index("g")
    both = lo.index[(lo["x"] != hi.loc[lo.index, "x"]).to_numpy()]
    with np.errstate(divide="ignore", invalid="ignore"):
        f = hi.loc[both, "var"].to_numpy() / lo.loc[both, "var"].to_numpy()
    p = stats.f.sf(f, hi.loc[both, "count"].to_numpy() - 1, lo.loc[both, "count"].to_numpy() - 1)
    out[both.to_numpy()[p < alpha]] = "1/x2"
    return out


def fit_curves(points: pd.DataFrame, weighting: str = "none") -> tuple[pd.DataFrame, pd.DataFrame]:
    """Fit every calibration curve of a points table.

    Parameters
    ----------
    points : pandas.DataFrame
        ``analyte, run, concentration_ug_L, response`` (standards and calibration blanks; other
        kinds are ignored when a ``kind`` column says so).
    weighting : {"none", "1/x", "1/x2", "auto"}

    Returns
    -------
    fits : pandas.DataFrame
        :data:`FIT_COLUMNS`, one row per (analyte, run).
    points : pandas.DataFrame
        The standards with ``weight, fitted, residual, back_calculated_ug_L, back_calc_error_pct``.
    """
    if weighting not in WEIGHTINGS:
        raise ValueError(f"weighting must be one of {WEIGHTINGS}")
    p = points
    if "kind" in p.columns:
        p = p[p["kind"].isin(["standard", "calibration_blank"])]
    p = p[np.isfinite(p["concentration_ug_L"]) & np.isfinite(p["response"])].reset_index(drop=True)
    keys = pd.MultiIndex.from_frame(p[["analyte", "run"]].astype(str))
    g, curves = pd.factorize(keys)
    k = len(curves)
    x = p["concentration_ug_L"].to_numpy(float)
    y = p["response"].to_numpy(float)
    wt = auto_weighting(g, k, x, y) if weighting == "auto" else np.full(k, weighting, dtype=object)
    w = _weights(g, k, x, wt)
    n, sw, swx, swy, swxx, swxy, swyy = _sums(g, k, np.ones_like(x), w, w * x, w * y, w * x * x, w * x * y, w * y * y)
    sxx = swxx - swx ** 2 / sw
    sxy = swxy - swx * swy / sw
    syy = swyy - swy ** 2 / sw
    with np.errstate(divide="ignore", invalid="ignore"):
        b = sxy / sxx
        a = (swy - b * swx) / sw
        r = sxy / np.sqrt(sxx * syy)
    fitted = a[g] + b[g] * x
    e = y - fitted
    (sse,) = _sums(g, k, w * e * e)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.sqrt(sse / (n - 2))
        se_b = s / np.sqrt(sxx)
        se_a = s * np.sqrt(1.0 / sw + (swx / sw) ** 2 / sxx)
        back = (y - a[g]) / b[g]
        err = np.where(x > 0, 100.0 * (back - x) / x, np.nan)
    lof = _lack_of_fit(g, k, x, y, w, sse)
    pts = p.assign(weight=w, fitted=fitted, residual=e, back_calculated_ug_L=back, back_calc_error_pct=err)
    lowest, highest, maxerr = np.full(k, np.inf), np.full(k, -np.inf), np.full(k, np.nan)
    np.minimum.at(lowest, g, np.where(x > 0, x, np.inf))
    np.maximum.at(highest, g, x)
    np.fmax.at(maxerr, g, np.abs(err))
    levels = pd.Series(x).groupby(g).nunique().reindex(range(k), fill_value=0).to_numpy()
    fits = pd.DataFrame({
        "analyte": curves.get_level_values(0), "run": curves.get_level_values(1), "weighting": wt, "n": n.astype(int),
        "levels": levels, "slope": b, "intercept": a, "r": r, "residual_sd": s,
        "se_slope": se_b, "se_intercept": se_a, **lof,
        "lowest_standard_ug_L": np.where(np.isfinite(lowest), lowest, np.nan), "highest_standard_ug_L": highest,
        "max_abs_back_calc_error_pct": maxerr})
    return fits[FIT_COLUMNS], pts


def _lack_of_fit(g, k, x, y, w, sse) -> dict[str, np.ndarray]:
    """Lack-of-fit F test per curve (NaN where levels are not replicated or too few)."""
    lv = pd.DataFrame({"g": g, "x": x, "y": y, "w": w})
    lv["wy"] = lv["w"] * lv["y"]
    s = lv.groupby(["g", "x"]).agg(sw=("w", "sum"), swy=("wy", "sum"), cnt=("y", "size"))
    mean = (s["swy"] / s["sw"]).rename("m")
    lv = lv.join(mean, on=["g", "x"])
    sspe = np.bincount(g, weights=lv["w"] * (lv["y"] - lv["m"]) ** 2, minlength=k)
    levels = s.groupby(level="g").size().reindex(range(k), fill_value=0).to_numpy()
    n = np.bincount(g, minlength=k)
    df1, df2 = levels - 2, n - levels
    ok = (df1 > 0) & (df2 > 0) & (sspe > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        f = np.where(ok, ((sse - sspe) / df1) / (sspe / df2), np.nan)
    p = np.where(ok, stats.f.sf(f, np.maximum(df1, 1), np.maximum(df2, 1)), np.nan)
    return {"lack_of_fit_F": f, "lack_of_fit_df1": np.where(ok, df1, 0), "lack_of_fit_df2": np.where(ok, df2, 0),
            "lack_of_fit_p": p}


def concentration_from_response(response, slope, intercept) -> np.ndarray:
    """Concentration from a response on the fitted line: x = (y − a) / b [µg/L].

    >>> float(concentration_from_response(12.0, 0.5, 2.0))
    20.0
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return (np.asarray(response, dtype=float) - np.asarray(intercept, dtype=float)) / np.asarray(slope, dtype=float)


SAMPLE_COLUMNS = ["analyte", "run", "sample_id", "response", "reported_ug_L", "recomputed_ug_L", "difference_pct",
                  "within_standards"]


def recompute_samples(points: pd.DataFrame, fits: pd.DataFrame) -> pd.DataFrame:
    """Concentrations of ``sample`` rows recomputed from their responses on their curve (same
    analyte and run), beside the reported result: ``difference_pct`` = 100 (reported − recomputed) /
    recomputed; ``within_standards`` whether the recomputed value lies within the standards."""
    s = points[points["kind"] == "sample"] if "kind" in points.columns else points.iloc[:0]
    if s.empty:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in SAMPLE_COLUMNS})
    f = fits.assign(analyte=fits["analyte"].astype(str), run=fits["run"].astype(str))
    m = s.assign(analyte=s["analyte"].astype(str), run=s["run"].astype(str)).merge(
        f[["analyte", "run", "slope", "intercept", "lowest_standard_ug_L", "highest_standard_ug_L"]],
        on=["analyte", "run"], how="left")
    x = concentration_from_response(m["response"], m["slope"], m["intercept"])
    rep = m["result_ug_L"].to_numpy(float)
    with np.errstate(divide="ignore", invalid="ignore"):
        diff = np.where(x != 0, 100.0 * (rep - x) / x, np.nan)
    inside = (x >= m["lowest_standard_ug_L"].fillna(0).to_numpy()) & (x <= m["highest_standard_ug_L"].to_numpy())
    return pd.DataFrame({"analyte": m["analyte"], "run": m["run"], "sample_id": m["sample_id"],
                         "response": m["response"], "reported_ug_L": rep, "recomputed_ug_L": x,
                         "difference_pct": diff, "within_standards": inside})[SAMPLE_COLUMNS]
