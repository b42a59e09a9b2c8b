"""Benchmark: `tracescreen screen` end to end against a bare pandas.read_csv of the same file.

Generates N results (default 1,000,000) in a lab-file layout with non-detects, mixed units and
several sites, then times, in the same run:

* reference: ``pandas.read_csv(file)`` (default options);
* tracescreen: load (parse, units, analytes, dates) + screen against the shipped tables + write
  ``screening.csv`` and ``rejected.csv``.

Prints both times, their ratio (goal: <= 3x) and the peak resident memory of the screening run
(goal: < 1.5 GB, measured in a fresh subprocess so the reference does not count). A second
reference, Arrow's CSV writer alone on the finished screening table, shows how much of the time
the size of the output sets (every result is screened against every applicable table, about 2.6
output rows of 35 columns per result here).

    python bench/bench_screen.py [--n 1000000]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]


def make_file(path: Path, n: int, seed: int = 1) -> None:
    rng = np.random.default_rng(seed)
    sites = np.array([f"S{i:03d}" for i in range(200)])
    analytes = np.array(["Arsenic", "Lead", "Dissolved Zinc", "Copper", "Cadmium", "Nickel", "Mercury", "Chromium"])
    fractions = np.array(["Total", "Total", "", "Total", "Dissolved", "Total", "Total", "Total"])
    units_ = np.array(["ug/L", "mg/L", "µg/L", "ppb"])
    unit_factor = np.array([1.0, 0.001, 1.0, 1.0])
    days = pd.date_range("2010-01-01", "2025-12-31", freq="D").strftime("%Y-%m-%d").to_numpy()
    a = rng.integers(0, len(analytes), n)
    u = rng.integers(0, len(units_), n)
    val = rng.lognormal(0.5, 1.2, n) * unit_factor[u]
    dl = 0.5 * unit_factor[u]
    nd = val < dl
    result = np.where(nd, np.char.add("<", np.char.mod("%g", dl)), np.char.mod("%.4g", val))
    df = pd.DataFrame({
        "Site": sites[rng.integers(0, len(sites), n)],
        "Sample ID": np.char.add("L", np.arange(n).astype(str)),
        "Sample Date": days[rng.integers(0, len(days), n)],
        "Parameter": analytes[a],
        "Fraction": fractions[a],
        "Result": result,
        "Units": units_[u],
        "LOR": np.char.mod("%g", dl),
        "Hardness": np.round(rng.uniform(20, 300, n), 1),
    })
    df.to_csv(path, index=False)


def run_screen(path: Path, out: Path) -> dict:
    """Run one screen in this process; returns timings."""
    sys.path.insert(0, str(ROOT / "src"))
    from tracescreen.io.loading import LoadOptions, load_results
    from tracescreen.limits.load import load_limits
    from tracescreen.report import writers as outputs
    from tracescreen.screening.screen import screen

    t0 = time.perf_counter()
    limits = load_limits(sorted((ROOT / "limits").glob("*.yaml")))
    res = load_results([path], LoadOptions(default_fraction="total"))
    t1 = time.perf_counter()
    scr = screen(res.accepted, limits, None)
    t2 = time.perf_counter()
    outputs.write_csv(scr, out / "screening.csv")
    outputs.write_csv(res.rejected, out / "rejected.csv")
    t3 = time.perf_counter()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # kB -> MB on Linux
    # second reference: Arrow's CSV writer alone on the finished table (text already rendered), i.e.
    # what writing this many rows and columns costs with no work of ours
    import pyarrow as pa
    import pyarrow.csv as pacsv
    plain = pa.Table.from_pandas(outputs.prepare(scr), preserve_index=False)
    plain = pa.Table.from_arrays([c.cast(c.type.value_type) if pa.types.is_dictionary(c.type) else c
                                  for c in plain.columns], names=plain.column_names)
    t4 = time.perf_counter()
    pacsv.write_csv(plain, out / "bare.csv")
    t_bare = time.perf_counter() - t4
    return {"load_s": t1 - t0, "screen_s": t2 - t1, "write_s": t3 - t2, "total_s": t3 - t0,
            "accepted": len(res.accepted), "rejected": len(res.rejected), "rows_out": len(scr), "peak_mb": peak,
            "bare_write_s": t_bare, "out_mb": (out / "screening.csv").stat().st_size / 1e6}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1_000_000)
    ap.add_argument("--cli", action="store_true",
                    help="also time the whole `tracescreen screen` command (statistics, trends, retest list, "
                         "periods; minutes at 1,000,000 results)")
    ap.add_argument("--child", nargs=2, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        print(json.dumps(run_screen(Path(args.child[0]), Path(args.child[1]))))
        return
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        f = tmp / "results.csv"
        t = time.perf_counter()
        make_file(f, args.n)
        print(f"generated {args.n:,} rows ({f.stat().st_size / 1e6:.0f} MB) in {time.perf_counter() - t:.1f} s")
        t = time.perf_counter()
        ref = pd.read_csv(f)
        t_ref = time.perf_counter() - t
        del ref
        p = subprocess.run([sys.executable, __file__, "--child", str(f), str(tmp)], capture_output=True, text=True,
                           check=True)
        r = json.loads(p.stdout.strip().splitlines()[-1])
        if args.cli:
            t = time.perf_counter()
            subprocess.run([sys.executable, "-m", "tracescreen", "screen", str(f), "--limits", str(ROOT / "limits"),
                            "--default-fraction", "total", "--out", str(tmp / "cli")], check=True,
                           capture_output=True, cwd=ROOT)
            r["cli_s"] = time.perf_counter() - t
            r["cli_peak_mb"] = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    print(f"pandas.read_csv (reference): {t_ref:6.2f} s")
    print(f"tracescreen screen total:    {r['total_s']:6.2f} s  (load {r['load_s']:.2f}, screen {r['screen_s']:.2f}, "
          f"write {r['write_s']:.2f})")
    print(f"ratio screen / read_csv:     {r['total_s'] / t_ref:6.2f}x   (goal <= 3x)")
    print(f"peak memory of the screen:   {r['peak_mb']:6.0f} MB  (goal < 1500 MB)")
    print(f"rows: accepted {r['accepted']:,}, rejected {r['rejected']:,}, screening rows {r['rows_out']:,} "
          f"({r['out_mb']:.0f} MB of CSV)")
    print(f"Arrow CSV writer alone on the finished table (single thread): {r['bare_write_s']:6.2f} s "
          f"= {r['bare_write_s'] / t_ref:.1f}x read_csv: the floor set by the size of the output")
    if "cli_s" in r:
        print(f"whole `tracescreen screen` command (all outputs): {r['cli_s']:6.1f} s = {r['cli_s'] / t_ref:.0f}x "
              f"read_csv, peak {r['cli_peak_mb']:.0f} MB")
    print(f"load average (1 min) at the end: {os.getloadavg()[0]:.2f} on {os.cpu_count()} cores")


if __name__ == "__main__":
    main()
