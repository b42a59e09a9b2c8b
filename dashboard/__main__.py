"""``python -m dashboard``: start the dashboard (``tracescreen dashboard`` runs this)."""

from __future__ import annotations

import argparse
import sys

from tracescreen.caution import CAUTION


def build_parser() -> argparse.ArgumentParser:
    """The parser of ``python -m dashboard`` (the options of ``tracescreen dashboard``)."""
    from tracescreen.cli.dashboard import add_dashboard_options

    p = argparse.ArgumentParser(
        prog="python -m dashboard",
        description="Start the tracescreen dashboard on lab result files and limit tables.",
        epilog=CAUTION,
    )
    add_dashboard_options(p)
    p.add_argument("--quiet", "-q", action="store_true", help="no progress display while loading and screening")
    return p


def build_app(args):
    """The dashboard app of parsed ``tracescreen dashboard`` options (user errors raise), its loading
    and screening shown as the command line shows its stages, on a terminal (tracescreen.cli.progress)."""
    from dashboard.app import create_app
    from tracescreen.cli.common import load_options
    from tracescreen.cli.dashboard import result_files
    from tracescreen.cli.progress import shown
    from tracescreen.cli.wells import wells_options
    from tracescreen.progress import reporting

    with shown(args, "dashboard") as progress, reporting(progress):
        return create_app(result_files(args) or None, args.limits, args.sites, options=load_options(args),
                          workspace=args.workspace, cross_fraction=args.cross_fraction,
                          wells=wells_options(args), qc_files=args.qc, calibration_files=args.calibration,
                          max_upload_bytes=int(args.max_upload_mb * 1e6), overlays=args.overlay)


def main(argv: list[str] | None = None) -> int:
    """Load and screen the inputs, then serve the dashboard; returns the exit code (2 on a user error)."""
    from tracescreen.cli import UserError
    from tracescreen.cli.dashboard import result_files

    parser = build_parser()
    args = parser.parse_args(argv)
    if bool(result_files(args)) == bool(args.workspace):
        parser.error("give lab result files (positional or --results FILE ...) or --workspace DIR")
    print("Loading and screening ...", file=sys.stderr)
    try:
        app = build_app(args)
    except (ValueError, OSError, KeyError, UserError) as exc:
        lines = str(exc).strip().splitlines()
        print(f"tracescreen dashboard: error: {lines[0] if lines else type(exc).__name__}", file=sys.stderr)
        return 2
    print(f"CAUTION: {CAUTION}", file=sys.stderr)
    print(f"Dashboard on http://{args.host}:{args.port}/  (Ctrl+C to stop; Flask's development server, for "
          "one user on this machine: README \"Serving the dashboard\" for a team)", file=sys.stderr)
    from dashboard.server import serve

    serve(app, args.host, args.port, debug=args.debug)  # uploads removed on Ctrl+C or SIGTERM; slow clients time out
    return 0


if __name__ == "__main__":
    sys.exit(main())
