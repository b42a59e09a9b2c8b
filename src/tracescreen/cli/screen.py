"""``tracescreen screen``: screen lab results against limit tables and write the output tables."""

from __future__ import annotations

from pathlib import Path

from . import UserError
from .common import add_data_options, announce, pipeline_inputs, print_caution, print_rejections
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
    group(p, "limits").add_argument("--guard-band", type=float, metavar="F",
                   help="measurement-uncertainty decision rule (Eurachem/CITAC guide on compliance "
                        "assessment): guard band g = F x the result's expanded uncertainty; reports beside "
                        "each status whether the decision holds beyond g (e.g. 1 for g = U)")
    add_retest_options(p)
    add_lab_qc_options(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen import pipeline
    from tracescreen._internal.memory import release_unused
    from tracescreen.report import writers as outputs

    if args.guard_band is not None and not args.guard_band >= 0:
        raise UserError(f"--guard-band {args.guard_band}: needs a number >= 0")
    options = pipeline.Options(cross_fraction=args.cross_fraction, guard_band=args.guard_band,
                               statistics=statistics_options(args), retest=retest_options(args, UserError),
                               record_run=args.command, lab_qc=lab_qc_options(args))
    res = pipeline.run(pipeline_inputs(args), options, on_loaded=announce)
    out = Path(args.out)
    lab_written = {name: outputs.write_csv(table, out / fname)
                   for name, (table, fname) in lab_qc_tables(res.lab_qc, res.calibration).items()}
    tables = {
        "screening": (res.screened, "screening.csv"),
        "rejected": (res.loaded.rejected, "rejected.csv"),
        "not_screened": (res.loaded.set_aside, "not_screened.csv"),
        "inputs": (res.input_files, "inputs.csv"),
        "limits": (limit_tables_table(res.limits), "limit_tables.csv"),
        "retest": (res.retest, "retest.csv"),
        "summary": (res.summary, "summary.csv"),
        "exceedance": (res.exceedances, "exceedances.csv"),
        "trends": (res.trends, "trends.csv"),
        "periods": (res.periods, "periods.csv"),
    }
    written = {}
    for name, (table, filename) in tables.items():
        written[name] = outputs.write_csv(table, out / filename)
        release_unused()  # each output's working memory is freed before the next one
        if name == "limits":
            written.update(lab_written)  # listed where the screen command has always listed them
    print_summary(res.loaded, res.screened)
    if args.guard_band is not None:
        print(f"Uncertainty decision rule: guard band g = {args.guard_band:g} x expanded uncertainty U "
              "(Eurachem/CITAC 2021); column uncertainty_decision")
    print(f"Retest flags: {len(res.retest)} rows" + "".join(
        f"\n  {r:<28} {n}" for r, n in res.retest["reason"].value_counts(sort=False).items()))
    print("\nOutputs:")
    for name, path in written.items():
        print(f"  {name:<10} {path}")
    print_caution()
    return 0


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


def print_summary(loaded, screened) -> None:
    from tracescreen.vocabulary import STATUSES

    f = loaded.files
    read, acc, rej = int(f["rows_read"].sum()), len(loaded.accepted), len(loaded.rejected)
    aside = len(loaded.set_aside)
    print(f"Rows read: {read}  accepted: {acc}  set aside (not screened): {aside}  rejected: {rej}" + (
        f"  (blank rows skipped: {int(f['blank_rows'].sum())})" if int(f["blank_rows"].sum()) else ""))
    for r in f.itertuples():
        where = r.file + (f" [{r.sheet}]" if r.sheet else "")
        print(f"  {where}: {r.rows_read} read, {r.accepted} accepted, {getattr(r, 'set_aside', 0)} set aside, "
              f"{r.rejected} rejected")
    print_rejections(loaded.rejected)
    counts = screened["status"].value_counts()
    print("Status (result x limit rows):")
    for s in STATUSES:
        print(f"  {s:<24} {int(counts.get(s, 0))}")
