"""``python -m tracescreen`` runs the command-line tool."""

from tracescreen.cli import main

if __name__ == "__main__":
    raise SystemExit(main())
