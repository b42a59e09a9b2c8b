"""Benchmark: vectorised trend tests and Kaplan-Meier against per-series reference loops.

5,000 series of 40 quarterly values (10 years) with about 20 % non-detects (two detection limits),
timed in the same run:

* trends: ``trends.mann_kendall_grouped`` on the uncensored series against a loop of
  ``pymannkendall.original_test`` (Mann-Kendall + Sen slope) over the same series;
* Kaplan-Meier: ``censored.kaplan_meier_grouped`` on the censored series against a loop of
  statsmodels ``SurvfuncRight`` on the flipped data (mean by the area under the survival curve with
  the Efron correction, percentiles by ``quantile``'s rule with a rounding tolerance at exact
  steps, see ``km_reference``). lifelines is not used: it needs pandas < 3.

Results are checked identical (S exactly; the rest to rtol 1e-10) and the figures and ratios
printed. Goals: trends >= 20x, Kaplan-Meier >= 10x. Run: ``.venv/bin/python bench/bench_stats.py``.
"""

from __future__ import annotations

import sys
import time

import numpy as np
import pymannkendall as mk
from statsmodels.duration.survfunc import SurvfuncRight

from tracescreen.statistics import censored
from tracescreen.statistics import mann_kendall as trends

N_SERIES, N_VALUES, SEED = 5000, 40, 20240601
PROBS = (0.5, 0.9, 0.95)


def make_series():
    """Lognormal values with a random drift; DL 0.6 µg/L for the first five years, then 0.4."""
    rng = np.random.default_rng(SEED)
    drift = rng.normal(0, 0.03, (N_SERIES, 1)) * np.arange(N_VALUES)
    y = np.round(rng.lognormal(0.2, 0.8, (N_SERIES, N_VALUES)) * np.exp(drift), 3)
    dl = np.where(np.arange(N_VALUES) < N_VALUES // 2, 0.6, 0.4)[None, :].repeat(N_SERIES, 0)
    nd = y < dl
    t = np.arange(N_VALUES) / 4.0  # quarterly, in years
    return t, y, np.where(nd, dl, y), nd


def km_reference(x, nd):
    """KM mean (Efron), sd and percentiles from statsmodels SurvfuncRight on flipped data."""
    big = x.max() + 1.0
    sf = SurvfuncRight(big - x, (~nd).astype(int))
    times, surv = sf.surv_times, sf.surv_prob
    mass = np.append(-np.diff(np.concatenate(([1.0], surv))), surv[-1])
    support = np.append(big - times, x.min())
    mean = big - (times[0] + np.sum(surv * np.diff(np.append(times, big - x.min()))))
    sd = np.sqrt(np.sum(mass * (support - mean) ** 2) * x.size / (x.size - 1))
    # SurvfuncRight.quantile's rule (first event time with S < 1 - q, here q = 1 - p) with a
    # 1e-12 rounding tolerance: with 40 values F reaches 20/40, 36/40, 38/40 exactly, and
    # statsmodels' exp(cumsum(log)) may land a hair either side of p
    quant = []
    for p in PROBS:
        ii = np.flatnonzero(surv < p - 1e-12)
        quant.append(big - times[ii[0]] if ii.size else np.nan)
    return [mean, sd] + quant


def timed(fn):
    start = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - start


def main() -> int:
    t, y, yc, nd = make_series()
    codes = np.repeat(np.arange(N_SERIES), N_VALUES)
    tt = np.tile(t, N_SERIES)
    print(f"{N_SERIES} series x {N_VALUES} quarterly values; non-detects {100 * nd.mean():.1f} %")
    ok = True

    # ---- trends (uncensored series) vs pymannkendall loop
    ours, t_ours = timed(lambda: trends.mann_kendall_grouped(tt, y.ravel(), None, codes, N_SERIES))
    ref, t_ref = timed(lambda: [mk.original_test(y[i]) for i in range(N_SERIES)])
    ref_arr = np.array([[r.s, r.var_s, r.z, r.p, r.Tau, r.slope] for r in ref])
    # pymannkendall's slope is per step (quarter); ours per year
    ours_arr = ours[["s", "var_s", "z", "p_value", "tau", "slope_per_year"]].to_numpy(float, copy=True)
    ours_arr[:, 5] /= 4.0
    same = (ours_arr[:, 0] == ref_arr[:, 0]).all() and np.allclose(ours_arr[:, 1:], ref_arr[:, 1:],
                                                                     rtol=1e-10, atol=1e-12)
    ratio = t_ref / t_ours
    ok &= same and ratio >= 20
    print(f"trends, uncensored: vectorised {t_ours:.3f} s | pymannkendall loop {t_ref:.3f} s | "
          f"{ratio:.1f}x (goal 20x) | identical S, Var(S), z, p, tau, Sen slope: {same}")

    # ---- censored trends (censored Kendall + Akritas-Theil-Sen): no reference library, timed only
    _, t_cens = timed(lambda: trends.mann_kendall_grouped(tt, yc.ravel(), nd.ravel(), codes, N_SERIES))
    print(f"trends, censored (Kendall with ties for non-detects, ATS slope): {t_cens:.3f} s")

    # ---- Kaplan-Meier vs statsmodels SurvfuncRight loop
    km, t_km = timed(lambda: censored.kaplan_meier_grouped(yc.ravel(), nd.ravel(), codes, N_SERIES, PROBS))
    kref, t_kref = timed(lambda: np.array([km_reference(yc[i], nd[i]) for i in range(N_SERIES)]))
    km_arr = km[["mean", "sd", "q50", "q90", "q95"]].to_numpy(float)
    same_km = np.allclose(km_arr, kref, rtol=1e-10, atol=0, equal_nan=True)
    ratio_km = t_kref / t_km
    ok &= same_km and ratio_km >= 10
    print(f"Kaplan-Meier: vectorised {t_km:.3f} s | statsmodels SurvfuncRight loop {t_kref:.3f} s | "
          f"{ratio_km:.1f}x (goal 10x) | identical mean, sd, median, p90, p95: {same_km}")
    print("all goals met" if ok else "GOAL NOT MET")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
