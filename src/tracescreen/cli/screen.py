"""``tracescreen screen``: screen lab results against limit tables and write the output tables."""

from __future__ import annotations

from pathlib import Path

from . import UserError
from .common import (
    add_data_options,
    add_format_option,
    announce,
    output_folder,
    pipeline_inputs,
    print_caution,
    print_rejections,
    warn,
)
from .flag_options import add_retest_options, retest_options
from .labqc import add_lab_qc_options, lab_qc_options, lab_qc_tables
from .parser import group
from .trends import add_statistics_options, statistics_options

EXAMPLES = [
    "tracescreen screen scenario_data/lab_results_fernleigh_2017-2020.csv scenario_data/lab_results_fernleigh_2021-2025.csv "
    "scenario_data/lab_results_eastbank.xlsx --columns scenario_data/columns_eastbank.yaml "
    "--sites scenario_data/sites.csv --limits limits --limits scenario_data/limits --out out/demo",
]


def register(sub) -> None:
    p = sub.add_parser(
        "screen", help="screen results against limit tables; write screening.csv, rejected.csv and retest.csv",
        description="Compare every accepted result with every limit that applies to its site, and list "
                    "every row that could not be used with its reason.")
    add_data_options(p)
    add_statistics_options(p)
    group(p, "output").add_argument("--out", required=True, metavar="DIR", help="folder for the output tables")
    add_format_option(p)
    g = p.add_argument_group("engine (a results dataset on a Dask cluster; README 'Running on a cluster')")
    g.add_argument("--engine", choices=("local", "dask"), default="local",
                   help="local: this process, one site group after the other; dask: the site groups of --dataset "
                        "on a Dask cluster, outputs as partitioned Parquet (OUT/screening/part-*.parquet)")
    g.add_argument("--workers", type=int, default=2, metavar="N",
                   help="with --engine dask and no --scheduler: worker processes of a local cluster")
    g.add_argument("--scheduler", metavar="ADDRESS",
                   help="with --engine dask: address of a running Dask scheduler (e.g. tcp://10.0.0.5:8786) "
                        "instead of a local cluster; every worker must see --dataset and --out at the same path")
    group(p, "limits").add_argument("--guard-band", type=float, metavar="F",
                   help="measurement-uncertainty decision rule (Eurachem/CITAC guide on compliance "
                        "assessment): guard band g = F x the result's expanded uncertainty; reports beside "
                        "each status whether the decision holds beyond g (e.g. 1 for g = U)")
    add_retest_options(p)
    add_lab_qc_options(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen import pipeline
    from tracescreen.screening.parts import STREAM_PART_ROWS
    from tracescreen.sinks import FileSink
    from tracescreen.streaming import dataset_days, output_days

    if args.guard_band is not None and not args.guard_band >= 0:
        raise UserError(f"--guard-band {args.guard_band}: needs a number >= 0")
    options = pipeline.Options(cross_fraction=args.cross_fraction, guard_band=args.guard_band,
                               statistics=statistics_options(args), retest=retest_options(args, UserError),
                               record_run=args.command, lab_qc=lab_qc_options(args), part_rows=STREAM_PART_ROWS)
    inputs = pipeline_inputs(args)
    out, fmt = Path(args.out), engine_format(args)
    if args.engine == "dask":
        data = pipeline.load(inputs, options.record_run)
        announce(data)
        return run_dask(args, inputs, options, data, out)
    folder = output_folder(args)  # --out checked before the work; outputs staged, renamed together, manifest last
    data = pipeline.load(inputs, options.record_run)
    announce(data)
    days = dataset_days(inputs.dataset) if inputs.dataset else output_days(data.loaded.accepted)
    written = {}
    with folder:
        # the per-result and per-series tables stream to their staged files part by part (parts of whole sites)
        sink = FileSink(out, fmt, days=days, path_for=folder.reserve)
        try:
            res = pipeline.run_loaded(data, inputs, options, sink, wide=True)
            streams = sink.close()
        except BaseException:
            sink.abort()
            raise
        whole = {  # whole-run tables, written once
            "rejected": (res.loaded.rejected, "rejected"),  # (a dataset's rejected rows stream with its parts)
            "not_screened": (res.loaded.set_aside, "not_screened"),
            "inputs": (res.input_files, "inputs"),
            "limits": (limit_tables_table(res.limits), "limit_tables"),
        }
        whole.update({name: (table, Path(fname).stem)
                      for name, (table, fname) in lab_qc_tables(res.lab_qc, res.calibration).items()})
        for name in ("screening", "screening_wide", "rejected", "not_screened", "inputs", "limits",
                     *lab_qc_tables(res.lab_qc, res.calibration), "retest", "summary", "exceedances", "trends",
                     "periods"):
            if name in streams:
                written[name] = streams[name]
                folder.set_rows(name, streams[name].rows, sha256=streams[name].sha256)
            elif name in whole:
                written[name] = stage_table(folder, name, *whole[name], fmt, days)
        manifest = folder.commit(res.input_files)
    if inputs.dataset:
        print_dataset_summary(res.loaded, streams, sink.status_counts)
    else:
        print_summary(res.loaded, sink.status_counts)
    if args.guard_band is not None:
        print(f"Uncertainty decision rule: guard band g = {args.guard_band:g} x expanded uncertainty U "
              "(Eurachem/CITAC 2021); column uncertainty_decision")
    reasons = sink.reason_counts
    print(f"Retest flags: {int(reasons.sum())} rows" + "".join(
        f"\n  {r:<28} {int(n)}" for r, n in reasons.items()))
    print("\nOutputs:")
    for name, stream in written.items():
        print(f"  {name:<14} {folder.final_path(name)}  ({stream.rows:,} rows)")
    print(f"  {'manifest':<14} {manifest}")
    for stream in written.values():
        if stream.warning:
            warn(stream.warning)
    print_caution()
    return 0


def stage_table(folder, name: str, table, stem: str, fmt: str, days):
    """Stage one whole-run table as ``stem.fmt`` in the output folder; returns its closed stream (rows, warning)."""
    from tracescreen.report.streams import write_table

    done = []
    folder.stage(name, f"{stem}.{fmt}", lambda p: done.append(write_table(table, p, fmt, name=stem, days=days)),
                 rows=len(table))
    return done[0]


def engine_format(args) -> str:
    """The output format: --format, else csv (parquet with --engine dask, whose outputs are partitioned Parquet)."""
    if args.engine == "dask":
        if not args.dataset:
            raise UserError("--engine dask reads a results dataset: give --dataset DIR "
                            "('tracescreen export --parquet' writes one from a workspace)")
        if args.format not in (None, "parquet"):
            raise UserError(f"--engine dask writes partitioned Parquet; --format {args.format} is not possible with it")
        return "parquet"
    if args.scheduler:
        raise UserError("--scheduler needs --engine dask")
    return args.format or "csv"


def run_dask(args, inputs, options, data, out: Path) -> int:
    """The site groups of --dataset on a Dask cluster; outputs as partitioned Parquet under ``out``."""
    from tracescreen.distributed import run_on_cluster
    from tracescreen.io.sites import sites_name
    from tracescreen.report.streams import write_table
    from tracescreen.streaming import dataset_context

    if args.workers < 1:
        raise UserError(f"--workers {args.workers}: needs at least 1")
    try:
        import distributed  # noqa: F401
    except ImportError:
        raise UserError("--engine dask needs dask.distributed: pip install 'tracescreen[distributed]'") from None
    ctx = dataset_context(inputs.dataset, data, options, wide=True)
    run = run_on_cluster(inputs.dataset, ctx, out, scheduler=args.scheduler, workers=args.workers,
                         sites_name=sites_name(inputs.sites))
    write_table(data.input_files, out / "inputs.parquet", "parquet", name="inputs")
    write_table(limit_tables_table(data.limits), out / "limit_tables.parquet", "parquet", name="limit_tables")
    read = int(data.loaded.files["rows_read"].sum())
    print(f"Results in the dataset: {read:,}  screened: {run.accepted:,}  rejected: {run.rows.get('rejected', 0):,}  "
          f"({len(run.tasks)} site groups on {len(run.workers)} workers)")
    print_statuses(run.status_counts)
    print("\nOutputs (partitioned Parquet, one file per site group):")
    for name, n in run.rows.items():
        print(f"  {name:<14} {out / name}/  ({n:,} rows)")
    print_caution()
    return 0


def print_dataset_summary(loaded, streams, status_counts) -> None:
    """Counts of a run over a results dataset: results read, screened, rejected (site not in the sites file)."""
    read = int(loaded.files["rows_read"].sum())
    rejected = streams["rejected"].rows if "rejected" in streams else 0
    print(f"Results in the dataset: {read:,}  screened: {read - rejected:,}  rejected: {rejected:,}")
    print_statuses(status_counts)


def limit_tables_table(limits):
    """One row per loaded limit table with its full citation (``screening.csv`` names the table)."""
    import pandas as pd

    t = limits.tables
    n = limits.entries.groupby("table_id").size()
    out = t[["table_id", "name", "source", "url", "use", "unit", "notes", "path"]].assign(
        entries=t["table_id"].map(n).fillna(0).astype(int))
    for c in ("effective_from", "effective_to"):  # the table's own dates (its entries' are within them)
        out[c] = t[c] if c in t else pd.NaT
    scope = t["default_scope"] if "default_scope" in t else pd.Series([{}] * len(t), index=t.index)
    out["default_scope"] = ["; ".join(f"{k}: {v}" for k, v in (d or {}).items()) for d in scope]
    return out


def print_summary(loaded, status_counts) -> None:

    f = loaded.files
    read, acc, rej = int(f["rows_read"].sum()), len(loaded.accepted), len(loaded.rejected)
    aside = len(loaded.set_aside)
    print(f"Rows read: {read}  accepted: {acc}  set aside (not screened): {aside}  rejected: {rej}" + (
        f"  (blank rows skipped: {int(f['blank_rows'].sum())})" if int(f["blank_rows"].sum()) else ""))
    for r in f.itertuples():
        where = r.file + (f" [{r.sheet}]" if r.sheet else "")
        print(f"  {where}: {r.rows_read} read, {r.accepted} accepted, {getattr(r, 'set_aside', 0)} set aside, "
              f"{r.rejected} rejected")
    print_rejections(loaded.rejected, set_aside=loaded.set_aside)
    print_statuses(status_counts)


def print_statuses(counts) -> None:
    from tracescreen.vocabulary import STATUSES

    print("Status (result x limit rows):")
    for s in STATUSES:
        print(f"  {s:<24} {int(counts.get(s, 0))}")
