"""Benchmark: one long series (site x analyte x fraction) through `tracescreen screen` with all statistics.

Issue 20: trend-test memory used to grow with the square of the series length (10,000 results in one
series took 3.7 GB, 20,000 took 13 GB). Fifty years of daily samples is 18,000 values. Goal: a series of
100,000 results screens with all statistics (summary, UCL, trends with Sen / Akritas-Theil-Sen slope,
retest checks; also with the bootstrap UCL) within 1 GB peak resident memory and in seconds.

Generates N results of lead (total) at one site, every 4 hours from 1980 (about 6 % non-detects at two
detection limits, a slow upward drift), writes the lab file, then runs ``tracescreen screen`` in a fresh
child process and reports its wall time and peak resident memory (``ru_maxrss`` of the child). The
reference in the same run is the same number of results spread over series of 40 values each (the
ordinary shape of a monitoring programme): the long series should cost about the same.

    flock /work/wt/bench.lock .venv/bin/python bench/bench_long_series.py [--n 100000]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
LIMITS = ROOT / "limits" / "who_gdwq_2022.yaml"


def make_file(path: Path, n: int, per_series: int | None = None, seed: int = 20) -> None:
    """N lead results; one series, or series of ``per_series`` values at as many sites."""
    rng = np.random.default_rng(seed)
    k = np.arange(n)
    if per_series is None:
        site = np.full(n, "L001")
        when = pd.Timestamp("1980-01-01") + pd.to_timedelta(k * 4, unit="h")
        years = k * 4 / 8766.0
    else:
        site = np.char.add("S", (k // per_series).astype(str))
        step = k % per_series
        when = pd.Timestamp("2010-01-01") + pd.to_timedelta(step * 91, unit="D")
        years = step / 4.0
    value = np.round(rng.lognormal(0.5, 0.7, n) * np.exp(0.01 * years), 3)
    dl = np.where(years < 10, 1.0, 0.5)
    nd = value < dl
    pd.DataFrame({
        "site_id": site, "sample_id": np.char.add("X", k.astype(str)), "sampled_at": when.strftime("%Y-%m-%d %H:%M"),
        "analyte": "Lead", "fraction": "total",
        "result": np.where(nd, np.char.add("<", dl.astype(str)), value.astype(str)),
        "unit": "ug/L", "detection_limit": dl,
    }).to_csv(path, index=False)


def run_screen_args(args: list[str], out: Path) -> tuple[float, float, int, str]:
    """`tracescreen screen ARGS --limits ... --out OUT --quiet` in a fresh child: wall time [s], peak RSS [MB]
    of the child, its exit code and its stderr."""
    code = ("import resource, sys\nfrom tracescreen.cli import main\nrc = main(sys.argv[1:])\n"
            "print('PEAK_KB', resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr)\nsys.exit(rc)")
    argv = [sys.executable, "-c", code, "screen", *args, "--limits", str(LIMITS), "--out", str(out), "--quiet"]
    t0 = time.perf_counter()
    proc = subprocess.run(argv, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    peak = [line for line in proc.stderr.splitlines() if line.startswith("PEAK_KB")]
    err = "\n".join(line for line in proc.stderr.splitlines() if not line.startswith("PEAK_KB"))
    return wall, (int(peak[-1].split()[1]) / 1024 if peak else float("nan")), proc.returncode, err


def run_screen(lab: Path, out: Path, extra: tuple[str, ...] = ()) -> tuple[float, float, int]:
    """Wall time [s], peak RSS [MB] of a fresh `tracescreen screen` child on one lab file, and its exit code."""
    wall, peak, rc, err = run_screen_args([str(lab), *extra], out)
    if rc != 0:
        print(err[-2000:], file=sys.stderr)
    return wall, peak, rc


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--n", type=int, default=100_000)
    args = ap.parse_args()
    ok = True
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        rows = []
        for label, per, extra in (("one series", None, ()), ("one series, --ucl bootstrap", None, ("--ucl", "bootstrap")),
                                  ("series of 40 (reference)", 40, ())):
            lab = tmp / f"lab_{per}.csv"
            if not lab.exists():
                make_file(lab, args.n, per)
            out = tmp / f"out_{len(rows)}"
            wall, peak, rc = run_screen(lab, out, extra)
            trends = pd.read_csv(out / "trends.csv") if rc == 0 else pd.DataFrame()
            rows.append((label, wall, peak, rc, len(trends)))
            print(f"{label:28s} n={args.n:,}: {wall:6.1f} s, peak RSS {peak:7.0f} MB, exit {rc}, "
                  f"{len(trends)} trend rows (load average {os.getloadavg()[0]:.1f})", flush=True)
        ref = rows[-1]
        for label, wall, peak, rc, n_trends in rows[:-1]:
            print(f"ratios {label} / reference: time {wall / ref[1]:.2f}x, peak memory {peak / ref[2]:.2f}x")
            ok &= rc == 0 and n_trends == 1 and peak < 1024
        print("goal (one series of", f"{args.n:,}", "results within 1 GB):", "met" if ok else "MISSED")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
