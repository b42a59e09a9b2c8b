"""Benchmark: the laboratory QC review of a large load against screening the same results.

Generates N accepted results (default 1,000,000) in batches of 500 with 8 metals, and for every
batch and metal a QC set (method blank, LCS, MS, MSD, three CCVs bracketing the run), about 5 %
of the QC values outside their windows, then times in the same run:

* reference: ``screening.screen.screen`` of the results against the four shipped limit tables
  (what ``tracescreen screen`` does before the review);
* the review: ``review_lab_qc`` (every element family, linking, qualifiers, retest rows, batch
  narratives).

Prints both times and their ratio (goal: the review costs no more than screening, ratio <= 1).

    python bench/bench_labqc.py [--n 1000000]
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.limits.load import load_limits
from tracescreen.retest.labqc.reading import QC_COLUMNS
from tracescreen.retest.labqc.review import review_lab_qc
from tracescreen.screening.screen import screen

ROOT = Path(__file__).resolve().parents[1]
METALS = ["arsenic", "lead", "zinc", "copper", "cadmium", "nickel", "mercury", "chromium"]


def make(n: int, seed: int = 3) -> tuple[pd.DataFrame, pd.DataFrame]:
    rng = np.random.default_rng(seed)
    per = 500
    nb = max(1, n // per)
    batch = np.repeat([f"B{i:05d}" for i in range(nb)], per)[:n]
    analyte = rng.choice(METALS, n)
    t0 = pd.Timestamp("2024-01-01") + pd.to_timedelta(np.repeat(np.arange(nb), per)[:n], unit="D")
    analysed = t0 + pd.to_timedelta(rng.integers(0, 600, n), unit="min")
    det = rng.random(n) > 0.3
    value = np.where(det, rng.lognormal(1.0, 1.0, n), np.nan)
    res = pd.DataFrame({
        "file": "big.csv", "sheet": "", "row": np.arange(n) + 2, "site_id": rng.choice([f"S{i}" for i in range(200)], n),
        "sample_id": [f"X{i}" for i in range(n)], "sampled_at": t0, "analyte": analyte, "fraction": "total",
        "result_text": "", "unit": "ug/L", "value_ug_L": value, "detected": det, "detection_limit_ug_L": 0.5,
        "qualifier": "", "sample_type": "sample", "parent_sample_id": "", "lab": "Lab A", "batch": batch,
        "analysed_at": analysed, "hardness_mg_L": np.nan, "uncertainty_ug_L": np.nan})
    for c in ("site_id", "analyte", "fraction", "sample_type", "lab", "batch", "unit", "qualifier", "result_text",
              "parent_sample_id", "file", "sheet"):
        res[c] = res[c].astype("category")
    # QC: per batch and metal: MB, LCS, MS, MSD, CCV x 3 (before, middle, after)
    b = np.repeat([f"B{i:05d}" for i in range(nb)], len(METALS))
    a = np.tile(METALS, nb)
    day = pd.Timestamp("2024-01-01") + pd.to_timedelta(np.repeat(np.arange(nb), len(METALS)), unit="D")
    k = len(b)
    fail = lambda: rng.random(k) < 0.05  # noqa: E731
    rows = []

    def add(element, **cols):
        d = {c: np.full(k, np.nan) for c in QC_COLUMNS}
        d.update({"file": "big.csv", "sheet": "", "row": 0, "qc_type": element, "element": element,
                  "qc_sample_id": "", "parent_sample_id": "", "lab": "Lab A", "batch": b, "prep_batch": "",
                  "run": "", "method": "", "technique": "", "analyte": a, "fraction": "total",
                  "analysed_at": day, "prepared_at": pd.NaT, "detected": True, "lab_flag": "",
                  "internal_standard": ""})
        d.update(cols)
        rows.append(pd.DataFrame(d))

    add("method_blank", result_ug_L=np.where(fail(), 0.8, np.nan), detected=fail(), detection_limit_ug_L=0.5,
        quantitation_limit_ug_L=1.0)
    add("lcs", result_ug_L=np.where(fail(), 14.0, 20.0), spike_added_ug_L=20.0)
    add("ms", result_ug_L=np.where(fail(), 12.0, 21.0), original_ug_L=1.0, spike_added_ug_L=20.0)
    add("msd", result_ug_L=21.5, original_ug_L=1.0, spike_added_ug_L=20.0)
    for minute in (0, 300, 600):
        add("ccv", result_ug_L=np.where(fail(), 43.0, 50.0), true_value_ug_L=50.0,
            analysed_at=day + pd.Timedelta(minutes=minute))
    qc = pd.concat(rows, ignore_index=True)
    qc["row"] = np.arange(len(qc)) + 2
    return res, qc


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=1_000_000)
    n = ap.parse_args().n
    res, qc = make(n)
    limits = load_limits([str(ROOT / "limits")])
    t = time.perf_counter()
    screened = screen(res, limits)
    t_ref = time.perf_counter() - t
    del screened
    t = time.perf_counter()
    rev = review_lab_qc(res, qc)
    t_rev = time.perf_counter() - t
    c = rev.counts()
    print(f"results {n:,}  QC rows {len(qc):,}  verdicts {c['verdicts']:,}  outside "
          f"{c['verdict_below'] + c['verdict_above']:,}  results qualified "
          f"{int((rev.qualified['lab_qc_qualifier'] != '').sum()):,}  retest rows {len(rev.retest):,}")
    print(f"reference (screening against the shipped tables): {t_ref:6.2f} s")
    print(f"lab QC review:                                    {t_rev:6.2f} s   ratio {t_rev / t_ref:.2f} (goal <= 1)")


if __name__ == "__main__":
    main()
