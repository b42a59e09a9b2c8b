"""Benchmark: the retest list (all flags and QC checks) on a large screening table.

Generates N site-sample results (default 1,000,000; quarterly series of 40 values per site, analyte
and fraction, 20 % non-detects, a few blanks, duplicates and late analyses), one limit per result,
writes them as CSV and times, in the same run:
  reference  pandas.read_csv of that CSV
  retest     tracescreen.retest.listing.retest_list on the in-memory table
and prints both and their ratio.  Usage: python bench/bench_retest.py [N]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.retest.listing import retest_list


def make_screening(n: int, seed: int = 7) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    per = 40
    n_series = max(n // (per * 16), 1) * 16
    n = n_series * per
    series = np.repeat(np.arange(n_series), per)
    pos = np.tile(np.arange(per), n_series)
    site = "S" + (series // 16).astype(str)
    analyte = np.array(["arsenic", "cadmium", "copper", "lead", "mercury", "nickel", "zinc", "chromium(vi)"])[series % 8]
    fraction = np.where((series // 8) % 2 == 0, "total", "dissolved")
    sampled = pd.Timestamp("2010-01-01") + pd.to_timedelta(pos * 91, unit="D")
    base = np.exp(rng.normal(1.0, 0.6, n)).reshape(-1, 2, 8, per)  # site, fraction, analyte, position
    base[:, 1] = base[:, 0] * 0.7 * np.exp(rng.normal(0, 0.05, base[:, 0].shape))  # dissolved < total
    value = base.reshape(-1)
    detected = rng.random(n) > 0.2
    dl = np.where(rng.random(n) < 0.05, 20.0, 0.5)
    sample_type = np.where(rng.random(n) < 0.01, "field_blank",
                           np.where(rng.random(n) < 0.02, "field_duplicate", "sample"))
    sample_id = np.char.add(np.char.add(site.astype(str), "-"), pos.astype(str))
    limit = np.full(n, 10.0)
    status = np.select([sample_type != "sample", detected & (value > limit), detected, dl <= limit],
                       ["qc_sample", "exceeds", "meets", "nondetect_meets"], "nondetect_inconclusive")
    return pd.DataFrame({
        "file": "bench.csv", "sheet": "", "row": np.arange(n) + 2, "site_id": site, "sample_id": sample_id,
        "sampled_at": sampled, "analyte": analyte, "fraction": fraction,
        "value_ug_L": np.where(detected, value, np.nan), "detected": detected, "detection_limit_ug_L": dl,
        "sample_type": sample_type, "parent_sample_id": np.where(sample_type == "field_duplicate", sample_id, ""),
        "lab": "LabA", "batch": np.char.add(site.astype(str), (pos // 2).astype(str)),
        "analysed_at": sampled + pd.to_timedelta(np.where(rng.random(n) < 0.01, 400, 1), unit="D"),
        "uncertainty_ug_L": np.where(rng.random(n) < 0.3, value * 0.15, np.nan),
        "limit_table": "bench", "use": "drinking_water", "duration": "", "limit_ug_L": limit,
        "ratio": value / limit, "status": status,
    })


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    scr = make_screening(n)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "screening.csv"
        scr.to_csv(path, index=False)
        t0 = time.perf_counter()
        pd.read_csv(path)
        t_ref = time.perf_counter() - t0
    t0 = time.perf_counter()
    out = retest_list(scr)
    t_retest = time.perf_counter() - t0
    print(f"rows: {len(scr):,}  retest rows: {len(out):,}")
    print(out["reason"].value_counts().to_string())
    print(f"reference pandas.read_csv: {t_ref:.2f} s")
    print(f"retest_list:               {t_retest:.2f} s")
    print(f"ratio retest / read_csv:   {t_retest / t_ref:.2f}")


if __name__ == "__main__":
    main()
