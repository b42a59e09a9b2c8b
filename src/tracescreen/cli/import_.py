"""``tracescreen import``: add lab files to a workspace, in one atomic, idempotent import."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .common import add_reading_options, load_options, print_caution


def register(sub) -> None:
    p = sub.add_parser(
        "import", help="add lab files to a workspace (atomic; a file already imported adds nothing)",
        description="Read lab files and add their results to the workspace in DIR (created if missing), "
                    "with their provenance: file, SHA-256, sheet, row, import and the original file. "
                    "The import lands whole or not at all. A file already in the workspace adds nothing; "
                    "a revised report supersedes the earlier values of the same results, which stay in "
                    "the history.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    p.add_argument("files", nargs="+", metavar="FILE", help="lab result files (CSV or XLSX)")
    p.add_argument("--workspace", required=True, metavar="DIR", help="workspace folder")
    p.add_argument("--sites", metavar="FILE",
                   help="sites CSV: results of sites not in it are rejected (with that reason)")
    add_reading_options(p)
    p.add_argument("--progress", action="store_true", help="print each step of the import on stderr")
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
