"""The app factory: ``create_app(results, limits, sites, columns)`` returns a ready Dash app."""

from __future__ import annotations

import sys
from pathlib import Path

import dash
from dash import Dash, Input, Output, dcc, html

from dashboard.render.components import caution_banner
from dashboard.state.session import BASE_KEY, Inputs
from dashboard.state.store import STORE_EXTENSION, DataStore, load_inputs

#: default cap on one uploaded file [bytes]
DEFAULT_MAX_UPLOAD_BYTES = 20 * 1000 * 1000


def create_app(results=None, limits=None, sites=None, columns=None, *, options=None, workspace=None,
               cross_fraction: bool = True, wells=None, inputs: Inputs | None = None, qc_files=(),
               calibration_files=(),
               max_upload_bytes: int = DEFAULT_MAX_UPLOAD_BYTES, upload_dir=None,
               preload: bool = True) -> Dash:
    """Build the dashboard on lab result files and limit tables.

    Parameters
    ----------
    results : path or list of paths
        Lab result files (CSV/XLSX), as for ``tracescreen screen``.
    limits : path
        A limit-table YAML file or a folder of them.
    sites : path, optional
        Sites CSV (uses, coordinates, default hardness).
    columns : path, optional
        Column-mapping YAML for result files with unusual headers.
    options : tracescreen.io.loading.LoadOptions, optional
        How to read the files (date order, decimal comma, ...); overrides ``columns``.
    workspace : path, optional
        A workspace folder (``tracescreen import``): its current results instead of ``results``.
    cross_fraction : bool
        Decide across fractions where certain (``--same-fraction-only`` turns it off), as ``screen`` does.
    wells : tracescreen.pipeline.WellsOptions, optional
        Network and design of monitoring wells: the Wells page compares them with background.
    inputs : Inputs, optional
        Already loaded inputs (instead of the paths above), e.g. from a workspace.
    max_upload_bytes : int
        Size cap of one uploaded file [bytes].
    upload_dir : path, optional
        Where uploaded files are kept (a temporary folder by default).
    preload : bool
        Load and screen the base data now rather than on the first request.
    qc_files, calibration_files : list of paths
        Laboratory QC summary files and calibration files for the Lab QC page (the QC rows of the
        result files are reviewed without them).
    """
    if inputs is None:
        if (results is None and workspace is None) or limits is None:
            raise ValueError("create_app needs result files (or a workspace) and limit tables (or inputs=...)")
        def base():
            return load_inputs(results, limits, sites, columns, options, workspace, cross_fraction, wells,
                               qc_files, calibration_files)
    else:
        base = inputs
    store = DataStore(base, upload_dir=upload_dir, max_upload_bytes=max_upload_bytes)

    app = Dash(
        __name__,
        use_pages=True,
        pages_folder=str(Path(__file__).parent / "pages"),
        title="tracescreen",
        suppress_callback_exceptions=True,
        serve_locally=True,
    )
    app.server.extensions[STORE_EXTENSION] = store
    # the whole request (base64 upload plus the JSON around it) stays a little above the file cap
    app.server.config["MAX_CONTENT_LENGTH"] = int(max_upload_bytes * 4 / 3) * 2 + 1_000_000
    app.layout = shell_layout

    @app.callback(Output("dataset-info", "children"), Input("dataset-key", "data"))
    def dataset_info(dataset_key):
        return describe_dataset(store.get(dataset_key))

    # each page's callbacks on this app (the pages record them; dashboard/pages/_shared.py)
    for page in dash.page_registry.values():
        sys.modules[page["module"]].callbacks.register(app)
    if preload:
        store.base_session()
        import tracescreen.statistics.trends  # noqa: F401  (the statistics now, not in the first chart's callback)
    return app


def describe_dataset(session) -> str:
    """One line on what the session holds."""
    n_results = int(session.rid.max()) + 1 if len(session.rid) else 0
    uploads = session.key.count("+")
    text = (f"{n_results:,} results at {len(session.site_ids)} sites, {len(session.analytes)} metals; "
            f"{len(session.rejected):,} rows rejected; {len(session.tables)} limit tables applied")
    return text + (f"; {uploads} upload(s) added in this browser session" if uploads else "")


def shell_layout() -> html.Div:
    """Header, caution, navigation and the current page."""
    pages = sorted(dash.page_registry.values(), key=lambda p: p.get("order", 99))
    return html.Div(
        [
            dcc.Store(id="dataset-key", storage_type="session", data=BASE_KEY),
            html.Header(
                [
                    html.Div([html.H1("tracescreen"),
                              html.Span("trace-metal screening of water monitoring results",
                                        className="tagline")], className="brand"),
                    html.Nav([dcc.Link(p["name"], href=p["relative_path"], className="nav-link",
                                       id=f"nav-{p['module'].split('.')[-1]}") for p in pages],
                             className="nav"),
                ],
                className="top",
            ),
            caution_banner(),
            html.Div(id="dataset-info", className="dataset-info"),
            html.Main(dash.page_container, className="content"),
        ],
        className="shell",
    )
