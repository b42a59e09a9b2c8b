"""``tracescreen screen``: screen lab results against limit tables and write the output tables."""

from __future__ import annotations

import argparse
from pathlib import Path

import pandas as pd

from tracescreen.report import writers as outputs
from tracescreen.screening.uncertainty import uncertainty_decision
from tracescreen._internal.memory import release_unused
from tracescreen.screening.periods import period_table
from tracescreen.screening.screen import screen
from tracescreen.vocabulary import STATUSES
from tracescreen.retest.calibration.checks import annotate_dl_too_high
from tracescreen.retest.listing import retest_list
from . import UserError
from .common import add_data_options, load_inputs, print_caution, warn
from .flag_options import add_retest_options, retest_options
from .labqc import calibration_review, review_for_screen, write_review
from .trends import add_statistics_options, write_statistics


def register(sub) -> None:
    p = sub.add_parser(
        "screen", help="screen results against limit tables; write screening.csv, rejected.csv and retest.csv",
        description="Compare every accepted result with every limit that applies to its site, and list "
                    "every row that could not be used with its reason.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    add_data_options(p)
    add_statistics_options(p)
    p.add_argument("--out", required=True, metavar="DIR", help="folder for the output tables")
    p.add_argument("--guard-band", type=float, metavar="F",
                   help="measurement-uncertainty decision rule (Eurachem/CITAC guide on compliance "
                        "assessment): guard band g = F x the result's expanded uncertainty; reports beside "
                        "each status whether the decision holds beyond g (e.g. 1 for g = U)")
    add_retest_options(p)
    p.add_argument("--qc", metavar="FILE", action="append", default=[],
                   help="a separate laboratory QC summary file (CSV or XLSX); the QC rows of the lab files "
                        "are reviewed without it (see 'tracescreen labqc')")
    p.add_argument("--calibration", metavar="FILE", action="append", default=[],
                   help="the laboratory's calibration file: results are checked against its standards and "
                        "the detection limits it supports (see 'tracescreen labqc')")
    p.add_argument("--weighting", choices=("none", "1/x", "1/x2", "auto"), default="auto",
                   help="calibration fit weighting (with --calibration)")
    p.set_defaults(func=run)


def run(args) -> int:
    flag_options = retest_options(args, UserError)
    inputs = load_inputs(args)
    if inputs.sites is None:
        warn("no --sites file: every limit table applies to every site")
    loaded = inputs.loaded
    screened = screen(loaded.accepted, inputs.limits, inputs.sites, cross_fraction=args.cross_fraction)
    if args.guard_band is not None:
        if not args.guard_band >= 0:
            raise UserError(f"--guard-band {args.guard_band}: needs a number >= 0")
        screened = uncertainty_decision(screened, args.guard_band)
    out = Path(args.out)
    written = {
        "screening": outputs.write_csv(screened, out / "screening.csv"),
        "rejected": outputs.write_csv(loaded.rejected, out / "rejected.csv"),
        "not_screened": outputs.write_csv(loaded.set_aside, out / "not_screened.csv"),
        "inputs": outputs.write_csv(inputs.input_files, out / "inputs.csv"),
        "limits": outputs.write_csv(limit_tables_table(inputs.limits), out / "limit_tables.csv"),
    }
    release_unused()
    review = review_for_screen(args, loaded)
    lab_rows = [] if review is None else [review.retest]
    if review is not None:
        written.update(write_review(review, out))
    ranges = None
    if args.calibration:
        cal_written, cal_retest, ranges = calibration_review(args, loaded.accepted, out)
        written.update(cal_written)
        lab_rows.append(cal_retest)
    lab_qc = pd.concat([r for r in lab_rows if len(r)], ignore_index=True) if any(len(r) for r in lab_rows) else None
    retest = retest_list(screened, flag_options, lab_qc=lab_qc)
    if ranges is not None:
        retest = annotate_dl_too_high(retest, ranges)
    written["retest"] = outputs.write_csv(retest, out / "retest.csv")
    release_unused()
    extra = run_extra_outputs(args, inputs, screened, out)
    written.update(extra)
    print_summary(loaded, screened)
    if args.guard_band is not None:
        print(f"Uncertainty decision rule: guard band g = {args.guard_band:g} x expanded uncertainty U "
              "(Eurachem/CITAC 2021); column uncertainty_decision")
    print(f"Retest flags: {len(retest)} rows" + "".join(
        f"\n  {r:<28} {n}" for r, n in retest["reason"].value_counts(sort=False).items()))
    print("\nOutputs:")
    for name, path in written.items():
        print(f"  {name:<10} {path}")
    print_caution()
    return 0


def limit_tables_table(limits):
    """One row per loaded limit table with its full citation (``screening.csv`` names the table)."""
    t = limits.tables
    n = limits.entries.groupby("table_id").size()
    return t[["table_id", "name", "source", "url", "use", "unit", "notes", "path"]].assign(
        entries=t["table_id"].map(n).fillna(0).astype(int))


def run_extra_outputs(args, inputs, screened, out: Path) -> dict:
    """Further output tables (statistics, periods, retest flags) as their modules land."""
    extra = write_statistics(args, inputs.loaded.accepted, screened, out)
    release_unused()  # each output's working memory is freed before the next one
    extra["periods"] = outputs.write_csv(period_table(screened, inputs.limits), out / "periods.csv")
    return extra


def print_summary(loaded, screened) -> None:
    f = loaded.files
    read, acc, rej = int(f["rows_read"].sum()), len(loaded.accepted), len(loaded.rejected)
    aside = len(loaded.set_aside)
    print(f"Rows read: {read}  accepted: {acc}  set aside (not screened): {aside}  rejected: {rej}" + (
        f"  (blank rows skipped: {int(f['blank_rows'].sum())})" if int(f["blank_rows"].sum()) else ""))
    for r in f.itertuples():
        where = r.file + (f" [{r.sheet}]" if r.sheet else "")
        print(f"  {where}: {r.rows_read} read, {r.accepted} accepted, {getattr(r, 'set_aside', 0)} set aside, "
              f"{r.rejected} rejected")
    counts = screened["status"].value_counts()
    print("Status (result x limit rows):")
    for s in STATUSES:
        print(f"  {s:<24} {int(counts.get(s, 0))}")
