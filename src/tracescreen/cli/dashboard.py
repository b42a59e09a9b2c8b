"""``tracescreen dashboard``: start the dashboard in its own process (``python -m dashboard``).

The engine never imports the dashboard package: this command checks that it is installed and
replaces itself with ``python -m dashboard`` and the same options.
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import subprocess
import sys

from .common import add_data_options
from .parser import group

EXAMPLES = [
    "tracescreen dashboard --workspace out/demo-workspace --limits limits --limits scenario_data/limits "
    "--sites scenario_data/sites.csv --port 8060",
]


def add_dashboard_options(p: argparse.ArgumentParser) -> None:
    """The dashboard's options (shared by ``tracescreen dashboard`` and ``python -m dashboard``)."""
    add_data_options(p, results_required=False, dataset=False)  # the dashboard reads files or a workspace
    group(p, "inputs").add_argument("--results", nargs="+", default=[], dest="results_option", metavar="FILE",
                   help="lab result files (CSV or XLSX), as an option instead of positional")
    server = group(p, "server")
    server.add_argument("--host", default="127.0.0.1",
                        help="address to listen on; the default serves this machine only (there is no login: "
                             "never serve beyond a trusted network)")
    server.add_argument("--port", type=int, default=8050, help="port to listen on")
    server.add_argument("--max-upload-mb", type=float, default=20.0, help="size cap of one uploaded file [MB]")
    server.add_argument("--debug", action="store_true", help="Dash debug mode (for development only)")
    group(p, "inputs").add_argument(
        "--overlay", action="append", default=[], metavar="GEOJSON",
        help="a GeoJSON file (catchment, rivers, site boundaries) drawn under the sites on the map; repeatable")
    lab = group(p, "labqc")  # the Lab QC page
    lab.add_argument("--qc", metavar="FILE", action="append", default=[],
                     help="a separate laboratory QC summary file (repeat for several)")
    lab.add_argument("--calibration", metavar="FILE", action="append", default=[],
                     help="the laboratory's calibration file (repeat for several)")
    from .wells import add_wells_options

    add_wells_options(p, design_options=False)


def result_files(args: argparse.Namespace) -> list[str]:
    """Lab files given positionally or with ``--results``."""
    return [*args.results, *args.results_option]


def register(sub) -> None:
    p = sub.add_parser(
        "dashboard", help="start the dashboard (a local web page) on results and limit tables",
        description="Start the tracescreen dashboard: overview matrix, map, site charts, exceedances, "
                    "retest list, data quality, limit tables and uploads, at http://HOST:PORT/.")
    add_dashboard_options(p)
    p.set_defaults(func=run)


def to_argv(args: argparse.Namespace) -> list[str]:
    """The options of ``args`` as a ``python -m dashboard`` command line."""
    argv = ["--results", *map(str, result_files(args))] if result_files(args) else []
    if getattr(args, "workspace", None):
        argv += ["--workspace", str(args.workspace)]
    for path in args.limits:
        argv += ["--limits", str(path)]
    for opt in ("sites", "columns", "date_order", "encoding", "default_fraction", "sheet"):
        if getattr(args, opt, None):
            argv += [f"--{opt.replace('_', '-')}", str(getattr(args, opt))]
    for opt in ("max_columns", "max_workbook_mb", "max_workbook_rows", "max_workbook_cells", "earliest_date"):
        if getattr(args, opt, None) is not None:
            argv += [f"--{opt.replace('_', '-')}", str(getattr(args, opt))]
    argv += ["--host", str(args.host), "--port", str(args.port), "--max-upload-mb", str(args.max_upload_mb)]
    for path in getattr(args, "overlay", []) or []:
        argv += ["--overlay", str(path)]
    if not args.cross_fraction:
        argv.append("--same-fraction-only")
    for opt in ("qc", "calibration"):
        for path in getattr(args, opt, None) or ():
            argv += [f"--{opt}", str(path)]
    for opt in ("network", "design"):
        if getattr(args, opt, None):
            argv += [f"--{opt}", str(getattr(args, opt))]
    if getattr(args, "background_standard", False):
        argv.append("--background-standard")
    return argv + (["--decimal-comma"] if args.decimal_comma else []) + (["--debug"] if args.debug else []) + (
        ["--quiet"] if getattr(args, "quiet", False) else [])


def run(args) -> int:
    from . import UserError

    if bool(result_files(args)) == bool(getattr(args, "workspace", None)):
        raise UserError("give lab result files (positional or --results FILE ...) or --workspace DIR")
    if importlib.util.find_spec("dashboard") is None or importlib.util.find_spec("dash") is None:
        raise UserError("the dashboard is not installed: pip install -e '.[dashboard]' in the project folder")
    command = [sys.executable, "-m", "dashboard", *to_argv(args)]
    sys.stdout.flush()
    sys.stderr.flush()
    if os.name == "posix":
        os.execv(sys.executable, command)  # the dashboard takes over this process
    return subprocess.call(command)
