"""Benchmark: designing prediction limits for 200 wells x 20 constituents x 8 evaluations.

An invented programme timed end to end with ``statistics.background.run.well_statistics``
(background checks, spatial tests, kappa, non-parametric plans, limits, retest sequences,
control charts, tolerance limits): 10 background wells and 200 compliance wells in 4 well groups,
20 constituents (normal, lognormal, about 70 % non-detects, never detected), 12 background rounds
and 8 quarterly evaluations (with resamples where a value is high), about 64,000 results.

Reference in the same run: kappa solved per well (one solve from scratch, its cache cleared, times
the number of parametric limits) against kappa as the design computes it (once per distinct
background size and degrees of freedom, cache cleared).
Goals: the whole design in seconds (< 30 s); kappa once per design at least 50x faster than per well.
Run: ``.venv/bin/python bench/bench_wells.py``.
"""

from __future__ import annotations

import sys
import time

import numpy as np
import pandas as pd

from tracescreen.statistics.background import kappa as kappa_mod
from tracescreen.statistics.background.design import Design
from tracescreen.statistics.background.run import well_statistics

N_BG, N_CW, N_CONST, N_BG_ROUNDS, N_EVAL, SEED = 10, 200, 20, 12, 8, 20240614


def make_programme():
    rng = np.random.default_rng(SEED)
    wells = [f"BG{i:02d}" for i in range(N_BG)] + [f"CW{i:03d}" for i in range(N_CW)]
    groups = {w: f"G{i % 4}" for i, w in enumerate(wells)}
    kinds = np.array(["normal", "lognormal", "censored", "never"])[np.arange(N_CONST) % 4]
    dates = pd.date_range("2015-01-01", periods=N_BG_ROUNDS + N_EVAL, freq="QS")
    site, analyte, when, value, detected, dl = [], [], [], [], [], []
    for w in wells:
        shift = rng.normal(0, 0.3)   # well-to-well differences: some groups differ
        for c in range(N_CONST):
            kind = kinds[c]
            if kind == "normal":
                x = rng.normal(50 + 5 * shift, 5, len(dates))
            elif kind == "lognormal":
                x = rng.lognormal(np.log(10) + shift, 0.4, len(dates))
            elif kind == "censored":
                x = rng.lognormal(np.log(0.5), 0.8, len(dates))
            else:
                x = np.full(len(dates), 0.05)
            d = np.full(len(dates), 1.0 if kind in ("censored", "never") else 0.01)
            det = x >= d
            site += [w] * len(dates)
            analyte += [f"c{c:02d}"] * len(dates)
            when += list(dates)
            value += list(np.where(det, x, np.nan))
            detected += list(det)
            dl += list(d)
            # a resample two weeks after each evaluation value above the 90th percentile
            hi = (np.arange(len(dates)) >= N_BG_ROUNDS) & (x > np.quantile(x, 0.9)) & det & w.startswith("CW")
            for j in np.flatnonzero(hi):
                site.append(w), analyte.append(f"c{c:02d}"), when.append(dates[j] + pd.Timedelta(days=14))
                value.append(x[j] * 0.9), detected.append(True), dl.append(d[j])
    results = pd.DataFrame({"site_id": site, "analyte": analyte, "fraction": "total", "sampled_at": when,
                            "value_ug_L": value, "detected": detected, "detection_limit_ug_L": dl,
                            "sample_type": "sample", "qualifier_meaning": ""})
    network = pd.DataFrame({"site_id": wells, "role": ["background"] * N_BG + ["compliance"] * N_CW,
                            "well_group": [groups[w] for w in wells], "comparison": "auto", "stage": "detection",
                            "background_from": pd.NaT, "background_to": pd.NaT})
    return results, network


def main() -> int:
    results, network = make_programme()
    design = Design.from_mapping({"evaluations_per_year": 4, "background_to": "2017-12-31"})
    kappa_mod.kappa.cache_clear()
    t0 = time.perf_counter()
    tables = well_statistics(results, network, design)
    total = time.perf_counter() - t0
    lim = tables["prediction_limits"]
    n_param = int(lim["kappa"].notna().sum())
    distinct = int(dict(zip(tables["design"]["setting"], tables["design"]["value"]))["distinct_kappa_designs"])
    param = lim[lim["kappa"].notna()]
    conf = float(dict(zip(tables["design"]["setting"], tables["design"]["value"]))["per_test_confidence"])
    kappa_mod.kappa.cache_clear()
    t0 = time.perf_counter()
    kappa_mod.kappa_table(pd.DataFrame({"n": param["n_background"], "df": param["df"], "confidence": conf}),
                          design.plan, design.evaluations_per_year)
    once = time.perf_counter() - t0
    kappa_mod.kappa.cache_clear()
    t0 = time.perf_counter()
    kappa_mod.kappa(12, 11.0, design.plan, conf, design.evaluations_per_year)
    one = time.perf_counter() - t0
    per_well = one * n_param
    print(f"results: {len(results):,}; compliance series: {len(lim):,} "
          f"({n_param:,} parametric, {int((lim['method'] == 'nonparametric').sum()):,} non-parametric, "
          f"{int((lim['method'] == 'double_quantification').sum()):,} double quantification); "
          f"retest sequence rows: {len(tables['retest_sequence']):,}")
    print(f"whole design (well_statistics): {total:.2f} s; distinct kappa designs: {distinct}")
    print(f"kappa once per design (with power at +3 and +4 SD): {once:.2f} s; reference, kappa per well: "
          f"{one * 1000:.1f} ms x {n_param:,} = {per_well:.1f} s -> {per_well / once:.0f}x")
    ok = total < 30 and per_well / once >= 50
    print("goals (design < 30 s; kappa >= 50x faster than per well):", "met" if ok else "NOT met")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
