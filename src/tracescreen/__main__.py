"""``python -m tracescreen`` runs the command-line tool."""

from tracescreen.cli import main

raise SystemExit(main())
