"""``tracescreen import``: add lab files to a workspace, in one atomic, idempotent import."""

from __future__ import annotations

import sys
from pathlib import Path

from .common import add_reading_options, load_options, print_caution
from .parser import group

EXAMPLES = [
    "tracescreen import scenario_data/lab_results_fernleigh_2017-2020.csv scenario_data/lab_results_fernleigh_2021-2025.csv "
    "--sites scenario_data/sites.csv --workspace out/demo-workspace",
]


def register(sub) -> None:
    p = sub.add_parser(
        "import", help="add lab files to a workspace (atomic; a file already imported adds nothing)",
        description="Read lab files and add their results to the workspace in DIR (created if missing), "
                    "with their provenance: file, SHA-256, sheet, row, import and the original file. "
                    "The import lands whole or not at all. A file already in the workspace adds nothing; "
                    "a revised report supersedes the earlier values of the same results, which stay in "
                    "the history.")
    inputs = group(p, "inputs")
    inputs.add_argument("files", nargs="+", metavar="FILE", help="lab result files (CSV or XLSX)")
    inputs.add_argument("--workspace", required=True, metavar="DIR", help="workspace folder")
    inputs.add_argument("--sites", metavar="FILE",
                        help="sites CSV: results of sites not in it are rejected (with that reason)")
    add_reading_options(p)
    group(p, "output").add_argument("--progress", action="store_true",
                                    help="print each step of the import on stderr as a line (for logs)")
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen.io.sites import load_sites
    from tracescreen.store.workspace import open_workspace

    sites = load_sites(args.sites) if args.sites else None
    progress = (lambda msg: print(f"  {msg}", file=sys.stderr, flush=True)) if args.progress else None
    with open_workspace(args.workspace, create=True) as ws:
        summary = ws.import_files(args.files, load_options(args), sites, sites_path=args.sites,
                                  columns_path=args.columns, progress=progress)
        n_current = ws.current_count()
        n_files = len(ws.files())
    print("\n".join(summary.lines()))
    if summary.total("rejected"):
        print(f"Rejected rows are kept with their reasons: tracescreen history --workspace "
              f"{args.workspace} --rejected")
    print(f"Workspace {Path(args.workspace)}: {n_current} current results from {n_files} files")
    print_caution()
    return 0
