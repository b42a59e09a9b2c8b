"""Benchmark: import N lab results into an empty workspace and load them back.

Generates a lab CSV of N results (default 1,000,000; canonical headers, 20 % non-detects, µg/L and
mg/L) and times, in the same run:
  reference  pandas.read_csv of that CSV (best of 3)
  loader     tracescreen.io.loading.load_results of the CSV (parsing only, nothing stored; once)
  import     Workspace.import_files into an empty workspace (read, parse, hash, store, commit; best of 2)
  load back  Workspace.current_results, the accepted-results DataFrame (best of 3)
and prints the figures and the ratios to the reference. Goals (README.md#workspace-keep-every-campaign): import <= 4x the bare
read, load back <= 1x.   Usage: python bench/bench_workspace.py [N]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.io import loading
from tracescreen.store.workspace import open_workspace

ANALYTES = ["arsenic", "cadmium", "copper", "lead", "mercury", "nickel", "zinc", "chromium"]


def make_lab_csv(path: Path, n: int, seed: int = 11) -> None:
    """Write ``n`` lab results: 8 analytes per sample, 60 sites, quarterly over 25 years."""
    rng = np.random.default_rng(seed)
    i = np.arange(n)
    sample = i // len(ANALYTES)
    site = sample % 60
    date = pd.Timestamp("2000-01-03") + pd.to_timedelta((sample // 60) % 100 * 91 + site, unit="D")
    value = np.round(np.exp(rng.normal(1.0, 1.0, n)), 3)
    mg = rng.random(n) < 0.3
    nd = rng.random(n) < 0.2
    result = np.where(mg, (value / 1000).round(6).astype(str), value.astype(str))
    dl = np.where(mg, "0.0005", "0.5")
    result = np.where(nd, np.char.add("<", dl), result)
    pd.DataFrame({
        "site_id": np.char.add("KR", (site + 1).astype(str)),
        "sample_id": np.char.add("B-", sample.astype(str)),
        "sampled_at": date.strftime("%Y-%m-%d"),
        "analyte": np.array(ANALYTES)[i % len(ANALYTES)],
        "fraction": np.where((i // len(ANALYTES)) % 2 == 0, "total", "dissolved"),
        "result": result, "unit": np.where(mg, "mg/L", "ug/L"), "detection_limit": dl,
        "qualifier": np.where(nd, "U", ""), "lab": "Bench Laboratory",
        "batch": np.char.add("BB-", (sample // 500).astype(str)),
        "hardness_mg_L": np.round(rng.uniform(20, 300, n), 1),
    }).to_csv(path, index=False)


def best(fn, repeat: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    with tempfile.TemporaryDirectory() as tmp:
        csv = Path(tmp) / "lab_results.csv"
        make_lab_csv(csv, n)
        t_ref, _ = best(lambda: pd.read_csv(csv), 3)
        t_loader, loaded = best(lambda: loading.load_results([csv]), 1)
        del loaded
        runs = iter(range(100))

        def do_import():
            with open_workspace(Path(tmp) / f"ws{next(runs)}", create=True) as ws:
                return ws.import_files([csv])

        t_import, summary = best(do_import, 2)
        with open_workspace(Path(tmp) / "ws0") as ws:
            t_load, back = best(ws.current_results, 3)
            assert ws.check() == []
        size = (Path(tmp) / "ws0" / "workspace.sqlite").stat().st_size
        print(f"results: {n:,}  CSV {csv.stat().st_size / 1e6:.0f} MB  workspace {size / 1e6:.0f} MB")
        print("  " + summary.lines()[-1])
        assert len(back) == summary.total("new")
    print(f"reference pandas.read_csv:        {t_ref:6.2f} s")
    print(f"loader (parse only, not stored):  {t_loader:6.2f} s   {t_loader / t_ref:5.2f}x")
    print(f"import into empty workspace:      {t_import:6.2f} s   {t_import / t_ref:5.2f}x  (goal <= 4x)")
    print(f"  of which storing (import - loader): {t_import - t_loader:5.2f} s   "
          f"{(t_import - t_loader) / t_ref:5.2f}x")
    print(f"load back current results:        {t_load:6.2f} s   {t_load / t_ref:5.2f}x  (goal <= 1x)")


if __name__ == "__main__":
    main()
