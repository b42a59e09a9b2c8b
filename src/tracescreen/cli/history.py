"""``tracescreen history``: the imports, files and screening runs of a workspace; one sample's versions."""

from __future__ import annotations

import json

from . import UserError
from .common import print_caution
from .parser import group

EXAMPLES = ["tracescreen history --workspace out/demo-workspace --check"]

_COUNTS = ["rows_read", "rows_new", "rows_unchanged", "rows_revised", "rows_superseded", "rows_rejected"]


def register(sub) -> None:
    p = sub.add_parser(
        "history", help="list a workspace's imports, files and screening runs",
        description="List every import (time, files, rows new/unchanged/revised/rejected), every stored "
                    "file with its SHA-256, and every screening run with the SHA-256 of its limit tables "
                    "and sites file. With --sample, show every stored version of that sample's results.")
    group(p, "inputs").add_argument("--workspace", required=True, metavar="DIR", help="workspace folder")
    out = group(p, "output")
    out.add_argument("--sample", metavar="ID", help="show every version of this sample's results, with provenance")
    out.add_argument("--rejected", action="store_true", help="list the rejected rows with their reasons")
    out.add_argument("--check", action="store_true",
                     help="also check the workspace's integrity (database, stored files, counts); exit 2 if damaged")
    p.set_defaults(func=run)


def _table(df) -> str:
    return df.to_string(index=False) if len(df) else "  (none)"


def run(args) -> int:
    import pandas as pd

    from tracescreen.store.workspace import open_workspace

    with open_workspace(args.workspace) as ws, ws.reading():
        imports, files, runs = ws.imports(), ws.files(), ws.screening_runs()
        history = ws.results_history() if args.sample else None
        rejected = ws.rejected_rows() if args.rejected else None
        problems = ws.check() if args.check else None
    if args.sample:
        versions = history[history["sample_id"] == args.sample]
        if versions.empty:
            raise UserError(f"no results for sample '{args.sample}' in the workspace")
        versions = versions.assign(status=versions["superseded_by"].map(
            lambda s: "current" if pd.isna(s) else f"superseded by import {s}"))
        cols = ["site_id", "sampled_at", "analyte", "fraction", "result_text", "unit", "value_ug_L",
                "status", "file", "sheet", "row", "import_id", "imported_at"]
        print(f"Sample {args.sample}: every stored version")
        print(_table(versions.sort_values(["analyte", "fraction", "import_id"])[cols]))
    else:
        print("Imports")
        print(_table(imports[["import_id", "finished_at", "files", *_COUNTS]].rename(
            columns=lambda c: c.replace("rows_", ""))))
        print("\nFiles")
        f = files.assign(sha256=files["sha256"].str[:16])
        print(_table(f[["file_id", "import_id", "name", "sheets", "sha256", *_COUNTS]].rename(
            columns=lambda c: c.replace("rows_", ""))))
        print("\nScreening runs")
        r = runs.assign(limits_sha256=runs["limits_sha256"].str[:16],
                        sites_sha256=runs["sites_sha256"].fillna("").str[:16],
                        tables=runs["limits"].map(lambda s: len(json.loads(s))))
        print(_table(r[["run_id", "run_at", "command", "last_import_id", "results", "tables",
                        "limits_sha256", "sites_sha256"]]))
    if rejected is not None:
        print("\nRejected rows")
        print(_table(rejected[["file", "sheet", "row", "reason", "import_id"]]))
    code = 0
    if problems is not None:
        print("\nIntegrity: " + ("sound" if not problems else f"{len(problems)} problem(s)"))
        for p in problems:
            print(f"  {p}")
        code = 2 if problems else 0  # a damaged workspace is unusable input (README "Exit codes")
    print_caution()
    return code
