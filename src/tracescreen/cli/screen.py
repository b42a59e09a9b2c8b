"""``tracescreen screen``: screen lab results against limit tables and write the output tables."""

from __future__ import annotations

import argparse
from pathlib import Path

from .. import outputs
from ..screening import STATUSES, screen
from .common import add_data_options, load_inputs, print_caution, warn


def register(sub) -> None:
    p = sub.add_parser(
        "screen", help="screen results against limit tables; write screening.csv and rejected.csv",
        description="Compare every accepted result with every limit that applies to its site, and list "
                    "every row that could not be used with its reason.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    add_data_options(p)
    p.add_argument("--out", required=True, metavar="DIR", help="folder for the output tables")
    p.set_defaults(func=run)


def run(args) -> int:
    inputs = load_inputs(args)
    if inputs.sites is None:
        warn("no --sites file: every limit table applies to every site")
    loaded = inputs.loaded
    screened = screen(loaded.accepted, inputs.limits, inputs.sites)
    out = Path(args.out)
    written = {
        "screening": outputs.write_csv(screened, out / "screening.csv"),
        "rejected": outputs.write_csv(loaded.rejected, out / "rejected.csv"),
        "inputs": outputs.write_csv(inputs.input_files, out / "inputs.csv"),
    }
    extra = run_extra_outputs(args, inputs, screened, out)
    written.update(extra)
    print_summary(loaded, screened)
    print("\nOutputs:")
    for name, path in written.items():
        print(f"  {name:<10} {path}")
    print_caution()
    return 0


def run_extra_outputs(args, inputs, screened, out: Path) -> dict:
    """Further output tables (statistics, periods, retest flags) as their modules land."""
    return {}


def print_summary(loaded, screened) -> None:
    f = loaded.files
    read, acc, rej = int(f["rows_read"].sum()), len(loaded.accepted), len(loaded.rejected)
    print(f"Rows read: {read}  accepted: {acc}  rejected: {rej}" + (
        f"  (blank rows skipped: {int(f['blank_rows'].sum())})" if int(f["blank_rows"].sum()) else ""))
    for r in f.itertuples():
        where = r.file + (f" [{r.sheet}]" if r.sheet else "")
        print(f"  {where}: {r.rows_read} read, {r.accepted} accepted, {r.rejected} rejected")
    counts = screened["status"].value_counts()
    print("Status (result x limit rows):")
    for s in STATUSES:
        print(f"  {s:<24} {int(counts.get(s, 0))}")
