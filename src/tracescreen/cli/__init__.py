"""The ``tracescreen`` command line: one module per sub-command, registered in :data:`COMMANDS`.

Each command module defines ``register(subparsers)`` (adding its parser, with ``--help``) and
``run(args) -> int``. User errors (unreadable files, invalid limit tables) end with exit code 2
and a one-line message, never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from tracescreen.caution import CAUTION

#: Sub-command modules, in the order ``--help`` lists them.
COMMANDS = [
    "screen",
    "trends",
    "wells",
    "labqc",
    "report",
    "dashboard",
    "import_",
    "history",
    "export",
    "limits",
]


class UserError(Exception):
    """An error in the user's input: printed as one line, exit code 2."""


def _user_error_types() -> tuple[type[BaseException], ...]:
    from tracescreen.io.columns import ColumnMapError
    from tracescreen.io.loading import LoadError
    from tracescreen.io.sites import SitesError
    from tracescreen.limits.load import LimitTableError
    from tracescreen.retest.calibration.reading import CalibrationFileError
    from tracescreen.retest.labqc.reading import QcFileError
    from tracescreen.store.workspace import WorkspaceError

    return (UserError, LoadError, LimitTableError, SitesError, ColumnMapError, FileNotFoundError,
            WorkspaceError, QcFileError, CalibrationFileError)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="tracescreen",
        description="Screen trace-metal results from water monitoring against cited limit tables.",
        epilog=CAUTION,
    )
    from tracescreen import __version__

    parser.add_argument("--version", action="version", version=f"tracescreen {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"{__name__}.{name}").register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return 2
    try:
        return int(args.func(args) or 0)
    except _user_error_types() as exc:
        msg = str(exc).strip().splitlines()[0] if str(exc).strip() else exc.__class__.__name__
        print(f"tracescreen: error: {msg}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into a command that stopped reading (e.g. `| head`)
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except KeyboardInterrupt:
        print("tracescreen: interrupted", file=sys.stderr)
        return 130
