"""The app factory: ``create_app(results, limits, sites, columns)`` returns a ready Dash app."""

from __future__ import annotations

import json
import logging
import sys
from pathlib import Path
from urllib.parse import parse_qs, urlsplit

import dash
from dash import Dash, Input, Output, State, dcc, html

from dashboard.render.components import caution_banner
from dashboard.render.status_css import status_css
from dashboard.state.session import BASE_KEY, Inputs
from dashboard.state.store import STORE_EXTENSION, DataStore, load_inputs

#: default cap on one uploaded file [bytes]
DEFAULT_MAX_UPLOAD_BYTES = 20 * 1000 * 1000
LOG = logging.getLogger("tracescreen.dashboard")


def create_app(results=None, limits=None, sites=None, columns=None, *, options=None, workspace=None,
               cross_fraction: bool = True, wells=None, inputs: Inputs | None = None,
               max_upload_bytes: int = DEFAULT_MAX_UPLOAD_BYTES, upload_dir=None,
               preload: bool = True, overlays=()) -> Dash:
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
    overlays : sequence of paths
        GeoJSON files drawn under the sites on the map (catchment, rivers, site boundaries).
    """
    if inputs is None:
        if (results is None and workspace is None) or limits is None:
            raise ValueError("create_app needs result files (or a workspace) and limit tables (or inputs=...)")
        def base():
            return load_inputs(results, limits, sites, columns, options, workspace, cross_fraction, wells)
    else:
        base = inputs
    store = DataStore(base, upload_dir=upload_dir, max_upload_bytes=max_upload_bytes, workspace=workspace,
                      overlays=overlays)

    app = Dash(
        __name__,
        use_pages=True,
        pages_folder=str(Path(__file__).parent / "pages"),
        title="tracescreen",
        suppress_callback_exceptions=True,
        serve_locally=True,
        routing_callback_inputs={"url_pushed": State("url-pushed", "data")},
        on_error=report_error,
    )
    app.index_string = app.index_string.replace("{%css%}", "{%css%}\n<style>" + status_css() + "</style>")
    app.server.extensions[STORE_EXTENSION] = store
    # the whole request (base64 upload plus the JSON around it) stays a little above the file cap
    app.server.config["MAX_CONTENT_LENGTH"] = int(max_upload_bytes * 4 / 3) * 2 + 1_000_000
    app.layout = shell_layout
    _keep_shown_views()

    @app.callback(Output("dataset-info", "children"), Input("dataset-key", "data"))
    def dataset_info(dataset_key):
        return describe_dataset(store.get(dataset_key))

    pages = _pages()
    app.clientside_callback(
        "function(pathname) { return window.dash_clientside.shell.markActive(pathname, "
        f"{json.dumps([_nav_id(p) for p in pages])}, {json.dumps([p['path'] for p in pages])}); }}",
        [Output(_nav_id(p), "className") for p in pages], Input("_pages_location", "pathname"),
    )
    app.clientside_callback("function(_) { return ''; }", Output("error-banner", "children"),
                            Input("_pages_location", "pathname"), prevent_initial_call=True)

    # each page's callbacks on this app (the pages record them; dashboard/pages/_shared.py)
    for page in dash.page_registry.values():
        sys.modules[page["module"]].callbacks.register(app)
    if preload:
        store.base_session()
        store.start_background()  # the trend table and the retest list, off the first requests
    return app


def report_error(exc: Exception) -> None:
    """Any callback that fails: the banner under the caution says what went wrong (the page stays usable)."""
    LOG.exception("callback failed", exc_info=exc)
    what = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    dash.set_props("error-banner", {"children": [
        html.Strong("Something went wrong: "), f"{what} ({type(exc).__name__}). ",
        "This part of the page was not updated; the rest still works. Reload the page to try again; "
        "if it keeps happening, the message above says what to report."]})


def describe_dataset(session) -> str:
    """One line on what the session holds."""
    n_results = int(session.rid.max()) + 1 if len(session.rid) else 0
    uploads = session.key.count("+")
    text = (f"{n_results:,} results at {len(session.site_ids)} sites, {len(session.analytes)} metals; "
            f"{len(session.rejected):,} rows rejected; {len(session.tables)} limit tables applied")
    return text + (f"; {uploads} upload(s) added in this browser session" if uploads else "")


def _pages() -> list[dict]:
    return sorted([p for p in dash.page_registry.values() if p.get("order", 0) < 90],
                  key=lambda p: p.get("order", 99))


def _nav_id(page: dict) -> str:
    return f"nav-{page['module'].split('.')[-1]}"


def _keep_shown_views() -> None:
    """Wrap every page's layout: when the address only records what the page shows already (the
    page wrote it, ``assets/url_state.js``), the router leaves the page alone."""
    for page in dash.page_registry.values():
        layout = page.get("layout")
        if not callable(layout) or getattr(layout, "_keeps_shown_view", False):
            continue

        page["layout"] = _keeping(layout, page["path"])


def _keeping(layout, path: str):
    def wrapped(url_pushed=None, **query):
        if url_pushed and _shown(url_pushed, path, query):
            return dash.no_update
        return layout(**query)

    wrapped._keeps_shown_view = True
    return wrapped


def _shown(pushed: str, path: str, query: dict) -> bool:
    parts = urlsplit(pushed)
    parsed = {k: v[0] if len(v) == 1 else v for k, v in parse_qs(parts.query, keep_blank_values=True).items()}
    return parts.path == path and parsed == query


def shell_layout() -> html.Div:
    """Skip link, header, caution, navigation, error banner and the current page."""
    return html.Div(
        [
            html.A("Skip to the page's content", href="#content", className="skip-link"),
            dcc.Store(id="dataset-key", storage_type="session", data=BASE_KEY),
            dcc.Store(id="url-pushed"),
            html.Header(
                [
                    html.Div([html.H1("tracescreen"),
                              html.Span("trace-metal screening of water monitoring results",
                                        className="tagline")], className="brand"),
                    html.Nav([dcc.Link(p["name"], href=p["relative_path"], className="nav-link", id=_nav_id(p))
                              for p in _pages()], className="nav", **{"aria-label": "Pages"}),
                ],
                className="top",
            ),
            caution_banner(),
            html.Div(id="error-banner", className="error-banner", role="alert"),
            html.Div(id="dataset-info", className="dataset-info"),
            html.Main(dash.page_container, className="content", id="content", tabIndex="-1"),
        ],
        className="shell",
    )
