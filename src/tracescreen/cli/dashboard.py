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


def add_dashboard_options(p: argparse.ArgumentParser) -> None:
    """The dashboard's options (shared by ``tracescreen dashboard`` and ``python -m dashboard``)."""
    p.add_argument("--results", nargs="+", required=True, metavar="FILE",
                   help="lab result files (CSV or XLSX)")
    p.add_argument("--limits", required=True, action="append", metavar="PATH",
                   help="limit table (YAML) or folder of tables; repeat for several")
    p.add_argument("--sites", metavar="FILE",
                   help="sites CSV (uses, coordinates, default hardness); without it every table "
                        "applies to every site")
    p.add_argument("--columns", metavar="FILE", help="YAML mapping of the lab's headers to canonical columns")
    p.add_argument("--host", default="127.0.0.1",
                   help="address to listen on; the default serves this machine only")
    p.add_argument("--port", type=int, default=8050, help="port to listen on")
    p.add_argument("--max-upload-mb", type=float, default=20.0, help="size cap of one uploaded file [MB]")
    p.add_argument("--debug", action="store_true", help="Dash debug mode (for development only)")


def register(sub) -> None:
    p = sub.add_parser(
        "dashboard", help="start the dashboard (a local web page) on results and limit tables",
        description="Start the tracescreen dashboard: overview matrix, map, site charts, exceedances, "
                    "retest list, data quality, limit tables and uploads, at http://HOST:PORT/.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    add_dashboard_options(p)
    p.set_defaults(func=run)


def to_argv(args: argparse.Namespace) -> list[str]:
    """The options of ``args`` as a ``python -m dashboard`` command line."""
    argv = ["--results", *map(str, args.results)]
    for path in args.limits:
        argv += ["--limits", str(path)]
    for opt in ("sites", "columns"):
        if getattr(args, opt):
            argv += [f"--{opt}", str(getattr(args, opt))]
    argv += ["--host", str(args.host), "--port", str(args.port), "--max-upload-mb", str(args.max_upload_mb)]
    return argv + (["--debug"] if args.debug else [])


def run(args) -> int:
    from . import UserError

    if importlib.util.find_spec("dashboard") is None:
        raise UserError("the dashboard package is not installed (pip install -e . in the project folder)")
    command = [sys.executable, "-m", "dashboard", *to_argv(args)]
    sys.stdout.flush()
    sys.stderr.flush()
    if os.name == "posix":
        os.execv(sys.executable, command)  # the dashboard takes over this process
    return subprocess.call(command)
