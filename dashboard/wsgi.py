"""The dashboard as a WSGI application, for a production server when a team shares one dashboard.

``tracescreen dashboard`` runs Flask's development server: right for one person on their own machine,
not for several users at once. To share one dashboard on a trusted network, put the options of
``tracescreen dashboard`` in a configuration file (README "Configuration file": its top level and its
``dashboard:`` section) and let a production WSGI server call :func:`create_server`::

    pip install waitress
    TRACESCREEN_CONFIG=team.yaml waitress-serve --listen=127.0.0.1:8060 --call dashboard.wsgi:create_server

    pip install gunicorn
    TRACESCREEN_CONFIG=team.yaml gunicorn --bind 127.0.0.1:8060 --workers 1 --threads 4 \\
        'dashboard.wsgi:create_server()'

One process (``--workers 1``) holds the screened data once; threads serve the users. The dashboard
has no login and no access control: serve it only on a trusted network (or behind a proxy that
authenticates), never on the open internet.
"""

from __future__ import annotations

import os


def create_server(config: str | None = None):
    """The Flask server of the dashboard built from a configuration file's ``dashboard`` options.

    Parameters
    ----------
    config : str, optional
        The configuration file; default ``$TRACESCREEN_CONFIG``, else ``tracescreen.yaml`` in the
        working folder.

    Returns
    -------
    flask.Flask
        A WSGI application (``app.server`` of the Dash app).
    """
    from dashboard.__main__ import build_app
    from tracescreen.cli import UserError, build_parser
    from tracescreen.cli.config import apply
    from tracescreen.cli.dashboard import result_files

    path = config or os.environ.get("TRACESCREEN_CONFIG")
    argv, used = apply(["dashboard", *(["--config", path] if path else [])], build_parser)
    if used is None:
        raise UserError("no configuration file: set TRACESCREEN_CONFIG=FILE or put tracescreen.yaml in the "
                        "working folder, with the dashboard's options (limits, sites, results or workspace)")
    args = build_parser().parse_args(argv)
    if bool(result_files(args)) == bool(args.workspace):
        raise UserError(f"{used.path}: give lab result files (results: [...]) or workspace: DIR")
    return build_app(args).server
