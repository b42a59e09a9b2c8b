"""The ``tracescreen`` command line: one module per sub-command, registered in :data:`COMMANDS`.

Each command module defines ``register(subparsers)`` (adding its parser, with ``--help``; its options
in the groups of :mod:`tracescreen.cli.parser`), ``run(args) -> int`` and ``EXAMPLES`` (command lines
shown at the end of its help, each run by the tests).

Exit codes (README "Exit codes"): 0 the command did its work (whatever the findings); 2 unusable
input or options, with a one-line message and never a traceback; 1 only for a bug in tracescreen,
with the request to report it and the traceback in a log file (:mod:`tracescreen.cli.crash`).
Every command reads ``tracescreen.yaml`` (:mod:`tracescreen.cli.config`) and shows progress on a
terminal (:mod:`tracescreen.cli.progress`).
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
    "completion",
]


class UserError(Exception):
    """An error in the user's input: printed as one line, exit code 2."""


def _user_error_types() -> tuple[type[BaseException], ...]:
    from tracescreen.io.columns import ColumnMapError
    from tracescreen.io.loading import LoadError
    from tracescreen.io.sites import SitesError
    from tracescreen.limits.load import LimitTableError
    from tracescreen.report.output_folder import OutputError
    from tracescreen.retest.calibration.reading import CalibrationFileError
    from tracescreen.retest.labqc.reading import QcFileError
    from tracescreen.store.workspace import WorkspaceError

    # OSError: a file or folder the system cannot read or write (permissions, a file where a folder
    # should be, a full disk) is the user's to fix, not a bug; OutputError: outputs not written (what remains said)
    return (UserError, LoadError, LimitTableError, SitesError, ColumnMapError, OSError,
            WorkspaceError, QcFileError, CalibrationFileError, OutputError)


def build_parser() -> argparse.ArgumentParser:
    from .parser import HelpFormatter, Parser, add_general_options, format_examples, short_usage
    from .version import VersionAction

    parser = Parser(
        prog="tracescreen",
        description="Screen trace-metal results from water monitoring against cited limit tables. "
                    "'tracescreen COMMAND --help' shows a command's options and an example.",
        epilog=f"CAUTION: {CAUTION}", formatter_class=HelpFormatter,
    )
    parser.add_argument("--version", action=VersionAction,
                        help="show the version, the Python, pandas and Dash versions and the shipped limit tables")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        module = importlib.import_module(f"{__name__}.{name}")
        before = set(sub.choices)
        module.register(sub)
        for command in set(sub.choices) - before:
            p = sub.choices[command]
            p.formatter_class = HelpFormatter
            p.epilog = "\n\n".join(t for t in (format_examples(getattr(module, "EXAMPLES", [])),
                                                f"CAUTION: {CAUTION}") if t)
            add_general_options(p)
            p.usage = short_usage(p)
    return parser


def _quiet_stdout() -> None:
    """Send what is left of stdout nowhere: the reader stopped (``| head``), which is not an error."""
    import os

    os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())


def _flush_stdout() -> None:
    try:
        sys.stdout.flush()
    except BrokenPipeError:
        _quiet_stdout()


def main(argv: list[str] | None = None) -> int:
    """Run one command; returns its exit code (README "Exit codes")."""
    from tracescreen.progress import reporting

    from .config import apply
    from .progress import shown

    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    try:
        argv, config = apply(argv, build_parser)
    except UserError as exc:
        print(f"tracescreen: error: {exc}", file=sys.stderr)
        return 2
    try:
        args = parser.parse_args(argv)
    except SystemExit:  # --help, --version or a usage error: already printed
        _flush_stdout()
        raise
    except BrokenPipeError:  # --help or --version piped into a command that stopped reading
        _quiet_stdout()
        return 0
    if not getattr(args, "command", None):
        parser.print_help()
        return 2
    args.config_used = config
    if config is not None:
        print(f"tracescreen: {config.describe()}", file=sys.stderr)
    try:
        with shown(args, args.command) as progress, reporting(progress):
            return int(args.func(args) or 0)
    except _user_error_types() as exc:
        msg = str(exc).strip().splitlines()[0] if str(exc).strip() else exc.__class__.__name__
        if isinstance(exc, OSError) and exc.filename and exc.strerror:  # not "[Errno 20] ..."
            msg = f"{exc.filename}: {exc.strerror.lower()}"
        print(f"tracescreen: error: {msg}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into a command that stopped reading (e.g. `| head`)
        _quiet_stdout()
        return 0
    except KeyboardInterrupt:
        print("tracescreen: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # noqa: BLE001 (anything else is a bug: reported, traceback to a log file)
        from .crash import report_bug

        return report_bug(exc, argv)
