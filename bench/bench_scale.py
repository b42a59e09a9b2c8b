"""Benchmark: the whole `tracescreen screen` at 1M and 10M results, CSV and Parquet outputs, one process and Dask.

Generates results with the generator of ``bench/bench_screen.py`` (every shipped default table applies
to every site: no sites file) and times, in the same run, against ``pandas.read_csv`` of the 1M file:

1. whole ``screen`` (every output table), CSV outputs           goal <= 50x read_csv, <= 1.5 GB
2. whole ``screen --format parquet``                             goal <= 25x, <= 1.5 GB
3. load + screen + write the screening table as Parquet           goal <= 3x
4. (``--big``) 10M results as a Parquet dataset (ten copies of the 1M results under new site ids,
   partitioned by site group), whole ``screen --dataset --format parquet`` in one process:
   goal <= 12x the time of (2), peak <= 2 GB
5. (``--big``) the same on Dask, a LocalCluster of 2 workers: time and each worker's peak memory

Every measured run is a fresh child process; its peak resident memory is its own ``VmHWM``
(``tracescreen._internal.memory.peak_memory_mb``: ``ru_maxrss`` would carry over this process's own peak).
The load average before and after each run is printed (the machine may be shared).

    python bench/bench_scale.py [--n 1000000] [--big] [--keep DIR]
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))


def child(mode: str, args: list[str]) -> None:
    """Run one measured job in this (fresh) process and print its time and peak memory as JSON."""
    t0 = time.perf_counter()
    if mode == "cli":
        from tracescreen.cli import main

        with open(os.devnull, "w") as null:
            stdout, sys.stdout = sys.stdout, null
            try:
                rc = main(args)
            finally:
                sys.stdout = stdout
        assert rc == 0, rc
    elif mode == "screen_parquet":  # load + screen + write the screening table as Parquet
        from tracescreen.io.loading import LoadOptions, load_results
        from tracescreen.limits.load import load_limits
        from tracescreen.report.streams import write_table
        from tracescreen.screening.screen import screen

        limits = load_limits(sorted((ROOT / "limits").glob("*.yaml")))
        res = load_results([args[0]], LoadOptions(default_fraction="total"))
        write_table(screen(res.accepted, limits, None), Path(args[1]) / "screening.parquet", "parquet")
    from tracescreen._internal.memory import peak_memory_mb

    print(json.dumps({"s": time.perf_counter() - t0, "peak_mb": peak_memory_mb()}))


def measure(mode: str, args: list[str], label: str) -> dict:
    before = os.getloadavg()[0]
    p = subprocess.run([sys.executable, __file__, "--child", mode, *args], capture_output=True, text=True, cwd=ROOT)
    if p.returncode:
        sys.exit(f"{label} failed:\n{p.stderr[-3000:]}")
    r = json.loads(p.stdout.strip().splitlines()[-1])
    r["load"] = (before, os.getloadavg()[0])
    print(f"  {label:<58} {r['s']:8.1f} s  peak {r['peak_mb']:6.0f} MB  (load avg {before:.1f} -> {r['load'][1]:.1f})",
          flush=True)
    return r


def make_dataset(csv: Path, dest: Path, copies: int) -> int:
    """``copies`` copies of the accepted results of ``csv`` under new site ids, as a dataset by site group."""
    import pyarrow as pa
    import pyarrow.dataset as ds

    from tracescreen.io.dataset import ROW_GROUPS, SITE_GROUP, arrow_table, group_count, site_groups
    from tracescreen.io.loading import LoadOptions, load_results

    acc = load_results([csv], LoadOptions(default_fraction="total")).accepted
    n_groups = group_count(len(acc) * copies)
    part = ds.partitioning(pa.schema([(SITE_GROUP, pa.int32()), ("year", pa.int32())]), flavor="hive")
    for k in range(copies):
        site = acc["site_id"].cat.rename_categories(lambda s: f"{s}-{k}")
        df = acc.assign(site_id=site, sample_id=acc["sample_id"].cat.rename_categories(lambda s: f"{s}-{k}"))
        df[SITE_GROUP] = site_groups(df["site_id"], n_groups)
        df["year"] = df["sampled_at"].dt.year.astype("int32")
        ds.write_dataset(arrow_table(df), dest, format="parquet",
                         basename_template=f"part-{k}-{{i}}.parquet", partitioning=part,
                         existing_data_behavior="overwrite_or_ignore", **ROW_GROUPS)
    return len(acc) * copies


def main() -> None:
    if sys.argv[1:2] == ["--child"]:  # a measured job: its arguments start with '--' (argparse would take them)
        child(sys.argv[2], sys.argv[3:])
        return
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1_000_000)
    ap.add_argument("--big", action="store_true", help="also the 10x dataset, one process and Dask (minutes)")
    ap.add_argument("--copies", type=int, default=10, help=argparse.SUPPRESS)
    ap.add_argument("--keep", metavar="DIR", help="generate into (and reuse) this folder")
    a = ap.parse_args()
    from bench_screen import make_file

    tmp = Path(a.keep) if a.keep else Path(tempfile.mkdtemp(prefix="bench_scale."))
    tmp.mkdir(parents=True, exist_ok=True)
    csv = tmp / f"results_{a.n}.csv"
    if not csv.exists():
        make_file(csv, a.n)
    print(f"{a.n:,} results, {csv.stat().st_size / 1e6:.0f} MB CSV; {os.cpu_count()} cores; "
          f"load average now {os.getloadavg()[0]:.2f}")
    t = time.perf_counter()
    pd.read_csv(csv)
    ref = time.perf_counter() - t
    print(f"  {'pandas.read_csv (reference)':<58} {ref:8.2f} s")
    data = ["--limits", "limits", "--default-fraction", "total"]
    r1 = measure("cli", ["screen", str(csv), *data, "--out", str(tmp / "o_csv")], "whole screen, CSV outputs")
    r2 = measure("cli", ["screen", str(csv), *data, "--format", "parquet", "--out", str(tmp / "o_pq")],
                 "whole screen --format parquet")
    r3 = measure("screen_parquet", [str(csv), str(tmp / "o_s")], "load + screen + write screening.parquet")
    rows = [("whole screen, CSV outputs", r1, 50, 1500), ("whole screen, --format parquet", r2, 25, 1500),
            ("load + screen + write screening, Parquet", r3, 3, None)]
    big = {}
    if a.big:
        dest = tmp / f"dataset_{a.copies}x"
        if not dest.exists():
            t = time.perf_counter()
            n = make_dataset(csv, dest, a.copies)
            print(f"  generated a {n:,}-result dataset in {time.perf_counter() - t:.0f} s")
        lim = ["--limits", "limits"]
        big["one"] = measure("cli", ["screen", "--dataset", str(dest), *lim, "--format", "parquet",
                                     "--out", str(tmp / "o_big")], f"{a.copies}x dataset, whole screen, one process")
        big["dask"] = dask_run(dest, lim, tmp / "o_dask", f"{a.copies}x dataset, Dask LocalCluster of 2 workers")
    print("\nmeasure                                   time     ratio    goal    peak MB   goal")
    for label, r, goal, mem in rows:
        print(f"  {label:<40} {r['s']:6.1f} s {r['s'] / ref:7.1f}x  <= {goal:>3}x  {r['peak_mb']:7.0f}"
              + (f"  <= {mem}" if mem else ""))
    if big:
        o = big["one"]
        print(f"  {'10x results, whole screen, Parquet':<40} {o['s']:6.1f} s {o['s'] / r2['s']:7.1f}x of (2) "
              f"<= 12x  {o['peak_mb']:7.0f}  <= 2000")
        d = big["dask"]
        print(f"  {'10x results on Dask, 2 workers':<40} {d['s']:6.1f} s {d['s'] / r2['s']:7.1f}x of (2); per-worker peak "
              + ", ".join(f"{v:.0f}" for v in d["workers"].values()) + f" MB; client {d['peak_mb']:.0f} MB")
    print(f"load average (1, 5, 15 min) at the end: {', '.join(f'{x:.2f}' for x in os.getloadavg())}")
    if not a.keep:
        shutil.rmtree(tmp, ignore_errors=True)


def dask_run(dest: Path, lim: list[str], out: Path, label: str) -> dict:
    """The Dask run in a child process; the workers' peaks come from the run's own summary."""
    code = (
        "import json,sys,time\n"
        "from tracescreen._internal.memory import peak_memory_mb\n"
        "from tracescreen import pipeline\n"
        "from tracescreen.distributed import run_on_cluster\n"
        "from tracescreen.streaming import dataset_context\n"
        f"inputs = pipeline.Inputs(limits=('limits',), dataset={str(dest)!r})\n"
        "t = time.perf_counter()\n"
        "data = pipeline.load(inputs)\n"
        "ctx = dataset_context(inputs.dataset, data, pipeline.Options(lab_qc=None), wide=True)\n"
        f"run = run_on_cluster(inputs.dataset, ctx, {str(out)!r}, workers=2)\n"
        "print(json.dumps({'s': time.perf_counter() - t, 'workers': run.workers,"
        " 'peak_mb': peak_memory_mb()}))\n"
    )
    before = os.getloadavg()[0]
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    if p.returncode:
        sys.exit(f"{label} failed:\n{p.stderr[-3000:]}")
    r = json.loads(p.stdout.strip().splitlines()[-1])
    print(f"  {label:<58} {r['s']:8.1f} s  workers' peaks "
          + ", ".join(f"{v:.0f}" for v in r["workers"].values())
          + f" MB  (load avg {before:.1f} -> {os.getloadavg()[0]:.1f})", flush=True)
    return r


if __name__ == "__main__":
    main()
