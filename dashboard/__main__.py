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
    return p


def main(argv: list[str] | None = None) -> int:
    """Load and screen the inputs, then serve the dashboard; returns the exit code (2 on a user error)."""
    from tracescreen.cli import UserError
    from tracescreen.cli.common import load_options
    from tracescreen.cli.dashboard import result_files
    from tracescreen.cli.wells import wells_options

    parser = build_parser()
    args = parser.parse_args(argv)
    results = result_files(args)
    if bool(results) == bool(args.workspace):
        parser.error("give lab result files (positional or --results FILE ...) or --workspace DIR")
    from dashboard.app import create_app

    print("Loading and screening ...", file=sys.stderr)
    try:
        app = create_app(results or None, args.limits, args.sites, options=load_options(args),
                         workspace=args.workspace, cross_fraction=args.cross_fraction, wells=wells_options(args),
                         qc_files=args.qc, calibration_files=args.calibration,
                         max_upload_bytes=int(args.max_upload_mb * 1e6))
    except (ValueError, OSError, KeyError, UserError) as exc:
        lines = str(exc).strip().splitlines()
        print(f"tracescreen dashboard: error: {lines[0] if lines else type(exc).__name__}", file=sys.stderr)
        return 2
    print(f"CAUTION: {CAUTION}", file=sys.stderr)
    print(f"Dashboard on http://{args.host}:{args.port}/  (Ctrl+C to stop)", file=sys.stderr)
    app.run(host=args.host, port=args.port, debug=args.debug)
    return 0


if __name__ == "__main__":
    sys.exit(main())
