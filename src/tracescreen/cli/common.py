"""Options shared by the commands that read lab files, limit tables and sites."""

from __future__ import annotations

import argparse
import sys
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from tracescreen._internal.hashing import file_sha256
from tracescreen.caution import CAUTION
from tracescreen.io.columns import load_column_map
from tracescreen.limits.load import LimitSet, load_limits
from tracescreen.io.loading import LoadOptions, LoadResult, load_results
from tracescreen.io.cells import DATE_ORDERS
from tracescreen.io.sites import load_sites
from tracescreen.store.workspace import open_workspace
from . import UserError


def add_data_options(p: argparse.ArgumentParser, results_required: bool = True) -> None:
    """Add the options that say which results, limit tables and sites to read."""
    p.add_argument("results", nargs="*", metavar="RESULTS",
                   help="lab result files (CSV or XLSX); or use --workspace")
    p.add_argument("--workspace", metavar="DIR",
                   help="use the current results of this workspace (see 'tracescreen import') instead of "
                        "lab files; the run is recorded in it with the SHA-256 of the limit tables and sites")
    p.add_argument("--limits", required=True, metavar="PATH", action="append",
                   help="limit table (YAML) or folder of tables; repeat for several")
    p.add_argument("--sites", metavar="FILE", help="sites CSV (site_id, name, latitude, longitude, uses, "
                   "hardness_mg_L); without it every table applies to every site")
    p.add_argument("--same-fraction-only", dest="cross_fraction", action="store_false",
                   help="compare results only with limits of their own fraction; by default a dissolved result "
                        "above a total limit exceeds it and a total result within a dissolved criterion meets it "
                        "(total >= dissolved), when the sample has no result of the limit's fraction")
    add_reading_options(p)
    p.set_defaults(results_required=results_required)


def add_reading_options(p: argparse.ArgumentParser) -> None:
    """Add the options that say how to read lab files."""
    p.add_argument("--columns", metavar="FILE", help="YAML mapping of the lab's headers to canonical columns")
    p.add_argument("--date-order", choices=DATE_ORDERS, default="iso",
                   help="how to read dates that are not ISO 8601: dmy (04/03/2021 = 4 March) or mdy; "
                        "default iso accepts ISO 8601 only")
    p.add_argument("--decimal-comma", action="store_true", help="read 0,5 as 0.5 (otherwise rejected)")
    p.add_argument("--encoding", default="utf-8", help="text encoding of CSV files (default utf-8)")
    p.add_argument("--default-fraction", choices=("total", "dissolved"),
                   help="fraction for rows that give none (otherwise such rows are rejected)")
    p.add_argument("--sheet", help="read only this sheet of XLSX files (default: every sheet with recognisable columns)")


@dataclass
class Inputs:
    loaded: LoadResult
    limits: LimitSet
    sites: pd.DataFrame | None
    input_files: pd.DataFrame     # every input file (results, limits, sites) with its SHA-256


def load_options(args) -> LoadOptions:
    return LoadOptions(column_map=load_column_map(args.columns) if args.columns else None,
                       date_order=args.date_order, decimal_comma=args.decimal_comma,
                       encoding=args.encoding, default_fraction=args.default_fraction, sheet=args.sheet)


def load_inputs(args) -> Inputs:
    """Read limit tables, sites and results as the options say (user errors raise)."""
    limits = load_limits(args.limits)
    sites = load_sites(args.sites) if args.sites else None
    loaded = results_from_args(args, sites)
    rows = [{"kind": "results", "file": r.file, "path": r.path, "sheet": r.sheet, "sha256": r.sha256}
            for r in loaded.files.itertuples()] if len(loaded.files) else []
    rows += [{"kind": "limits", "file": Path(p).name, "path": p, "sheet": "", "sha256": file_sha256(p)}
             for p in limits.tables["path"]]
    if args.sites:
        rows.append({"kind": "sites", "file": Path(args.sites).name, "path": args.sites, "sheet": "",
                     "sha256": file_sha256(args.sites)})
    if getattr(args, "workspace", None):
        with open_workspace(args.workspace) as ws:
            ws.record_screening_run(args.command, len(loaded.accepted), limits.tables["path"], args.sites,
                                    {"accepted": len(loaded.accepted), "rejected": len(loaded.rejected)})
    return Inputs(loaded, limits, sites, pd.DataFrame(rows))


def results_from_args(args, sites: pd.DataFrame | None) -> LoadResult:
    """The lab results the command should use: the lab files given, or the current results of
    ``--workspace`` (results of sites not in ``sites`` then rejected, as the loader does)."""
    name = Path(args.sites).name if getattr(args, "sites", None) else "the sites file"
    if getattr(args, "workspace", None):
        if args.results:
            raise UserError("give lab result files or --workspace DIR, not both")
        with open_workspace(args.workspace) as ws:
            loaded = ws.load_result(sites, name)
        for msg in loaded.warnings:
            warn(msg)
        return loaded
    if not args.results and getattr(args, "results_required", True):
        raise UserError("no lab result files given (give files, or --workspace DIR)")
    return load_results(args.results, load_options(args), sites, sites_name=name)


def print_caution(stream=None) -> None:
    print(f"\nCAUTION: {CAUTION}", file=stream or sys.stdout)


def warn(msg: str) -> None:
    print(f"tracescreen: warning: {msg}", file=sys.stderr)
