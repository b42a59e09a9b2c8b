"""What the pages share: their callbacks registered on one app, filter options and server-side tables.

A page records its callbacks on a :class:`PageCallbacks` (``callbacks = PageCallbacks()`` and
``@callbacks.callback(...)``) instead of Dash's process-wide ``dash.callback``; ``create_app``
registers every page's callbacks on its own app with the public ``app.callback`` and
``app.clientside_callback``. So several apps can live in one process (the tests start several),
each with its own callbacks, without reaching into Dash's private set-up.
"""

from __future__ import annotations

from typing import Callable

import pandas as pd
from dash import ClientsideFunction, Input, Output, State, no_update

from dashboard.state.store import current_session
from dashboard.views.grid_query import FilterError, GridQuery, block_records, query_positions
from dashboard.views.matrix import filter_options


class PageCallbacks:
    """The callbacks of one page, recorded here and registered on an app by :meth:`register`."""

    def __init__(self) -> None:
        self._server: list[tuple[tuple, dict, Callable]] = []
        self._client: list[tuple[tuple, dict]] = []

    def callback(self, *args, **kwargs) -> Callable[[Callable], Callable]:
        """Record a server-side callback (arguments as for ``app.callback``); the function is returned unchanged."""
        def record(fn: Callable) -> Callable:
            self._server.append((args, kwargs, fn))
            return fn
        return record

    def clientside_callback(self, *args, **kwargs) -> None:
        """Record a clientside callback (arguments as for ``app.clientside_callback``)."""
        self._client.append((args, kwargs))

    def functions(self) -> dict[str, Callable]:
        """The recorded server-side callback functions by name (the benchmark calls them directly)."""
        out: dict[str, Callable] = {}
        for _, _, fn in self._server:
            out.setdefault(fn.__name__, fn)
        return out

    def register(self, app) -> None:
        """Register every recorded callback on ``app``."""
        for args, kwargs, fn in self._server:
            app.callback(*args, **kwargs)(fn)
        for args, kwargs in self._client:
            app.clientside_callback(*args, **kwargs)


def register_filter_options(callbacks: PageCallbacks, prefix: str) -> None:
    """Callback filling the filter controls made by :func:`dashboard.render.components.filter_controls`."""

    @callbacks.callback(
        Output(f"{prefix}-uses", "options"), Output(f"{prefix}-tables", "options"),
        Output(f"{prefix}-fraction", "options"), Output(f"{prefix}-dates", "min_date_allowed"),
        Output(f"{prefix}-dates", "max_date_allowed"), Output(f"{prefix}-campaigns", "options"),
        Input("dataset-key", "data"),
    )
    def fill_filter_options(dataset_key):
        return filter_options(current_session(dataset_key))


def register_server_grid(callbacks: PageCallbacks, prefix: str, grid_id: str, columns, frame_for,
                         extra=None, states: tuple = ()) -> None:
    """Callbacks serving grid ``grid_id`` block by block from ``frame_for(session, *state_values)``
    (filter, sort and paging on the server, :mod:`dashboard.views.grid_query`), with its
    ``{prefix}-count`` text, its ``{prefix}-error`` message and the grid's query kept in
    ``{prefix}-query`` (downloads and the address use it: they hold exactly the rows on screen); and
    the column chooser.

    ``columns``: a list of :class:`dashboard.render.grid.Column`, or a function of the session giving
    it. ``extra(frame) -> dict of columns`` adds computed fields to each block (e.g. a chart link).
    ``states``: further ``State`` values passed to ``frame_for`` (e.g. a date on the page).
    """
    @callbacks.callback(
        Output(grid_id, "getRowsResponse"), Output(f"{prefix}-count", "children"),
        Output(f"{prefix}-error", "children"), Output(f"{prefix}-query", "data"),
        Input(grid_id, "getRowsRequest"), State("dataset-key", "data"), *states,
    )
    def serve_grid_rows(request, dataset_key, *state_values):
        if not request:
            return no_update, no_update, no_update, no_update
        session = current_session(dataset_key)
        models = {"filterModel": request.get("filterModel") or {}, "sortModel": request.get("sortModel") or []}
        try:
            rows, n_all, cols = query_frame(session, prefix, frame_for, models, columns, state_values)
        except FilterError as exc:
            return {"rowData": [], "rowCount": 0}, "", f"Filter not applied: {exc}.", {**models, "error": str(exc)}
        start = int(request.get("startRow") or 0)
        block = rows.iloc[start:max(int(request.get("endRow") or 0), start)]
        from dashboard.render.grid import displays

        records = block_records(block, [c.field for c in cols], displays(cols), extra)
        return {"rowData": records, "rowCount": len(rows)}, f"{len(rows):,} of {n_all:,} rows", "", models

    register_column_chooser(callbacks, grid_id)


def register_column_chooser(callbacks: PageCallbacks, grid_id: str) -> None:
    """The column chooser of a grid (:func:`dashboard.render.grid.column_chooser`), in the browser."""
    callbacks.clientside_callback(
        ClientsideFunction("grid", "showColumns"), Output(f"{grid_id}-columns", "style"),
        Input(f"{grid_id}-columns", "value"), State(grid_id, "columnDefs"), State(grid_id, "id"),
        prevent_initial_call=True,
    )


def query_frame(session, prefix: str, frame_for, query_data: dict | None, columns, state_values=()):
    """The rows a grid's query selects, in its order, the number of all rows and the grid's columns.

    The positions of a query are kept per session (:meth:`SessionData.cached`), so paging through a
    filtered, sorted table of a million results filters and sorts once; a frame that changes while the
    session lasts (the retest request's statuses) says so with ``frame.attrs["version"]``.
    Raises FilterError when the query cannot be applied.
    """
    from dashboard.render.grid import displays, headings

    query_data = query_data or {}
    if query_data.get("error"):
        raise FilterError(query_data["error"])
    query = GridQuery.from_models(query_data.get("filterModel"), query_data.get("sortModel"))
    frame = frame_for(session, *state_values)
    cols = columns(session) if callable(columns) else columns
    version = (frame.attrs.get("version"), len(frame))
    positions = session.cached(f"grid:{prefix}", (query, version),
                               lambda: query_positions(frame, query, headings(cols), displays(cols)), size=16)
    return frame.iloc[positions], len(frame), cols


def rows_on_screen(session, prefix: str, frame_for, query_data: dict | None, columns, state_values=()) -> pd.DataFrame:
    """The rows the grid shows now (its filter and sort), for a download; raises FilterError when the
    grid's filter could not be applied (a download then refuses rather than holding every row)."""
    return query_frame(session, prefix, frame_for, query_data, columns, state_values)[0]


def register_download_query(callbacks: PageCallbacks, prefix: str, grid_id: str, buttons: list[str]) -> None:
    """A press of one of ``buttons`` writes ``{prefix}-shown`` (a ``dcc.Store`` of the page): the grid's
    filter and sort models at that moment and the button pressed (``assets/grid.js``, ``shownQuery``).

    A download callback takes ``Input(f"{prefix}-shown", "data")`` and passes it to :func:`rows_on_screen`.
    Reading the grid itself, not ``{prefix}-query`` (the models of the last row request answered), keeps a
    download made while the grid's request for a new filter is on its way from holding the rows of the
    superseded filter.
    """
    callbacks.clientside_callback(
        ClientsideFunction("grid", "shownQuery"), Output(f"{prefix}-shown", "data"),
        *[Input(b, "n_clicks") for b in buttons], State(grid_id, "id"), State(f"{prefix}-query", "data"),
        prevent_initial_call=True,
    )


def register_url_state(callbacks: PageCallbacks, path: str, store_id: str, params: list[tuple],
                       shared: bool = False) -> None:
    """Write a page's controls into its address as they change (``assets/url_state.js``); ``store_id``
    is a ``dcc.Store`` of the page the callback nominally writes (it never changes).

    ``params``: ``(name, component_id, prop, kind, default)`` with kind ``text``, ``list``, ``date``,
    ``grid`` (a grid's query store, written as ``name_filter`` and ``name_sort``) or ``kept`` (the list
    ``name`` of a store's dict). With ``shared``, the
    shared filters (:data:`dashboard.views.url_state.SHARED_FILTERS`) also go to the navigation links
    of the other pages that have them, so the filters carry across pages.
    """
    import json

    from dashboard.views.url_state import SHARED_FILTERS

    names = [p[0] for p in params]
    kinds = [p[3] for p in params]
    defaults = [p[4] for p in params]
    shared_names = [n for n in names if n in SHARED_FILTERS] if shared else []
    links = [[f"nav-{module}", href] for module, href in SHARED_FILTER_PAGES.items()] if shared else []
    inputs = list(dict.fromkeys((cid, prop) for _, cid, prop, _, _ in params))  # each input once
    index = [inputs.index((cid, prop)) for _, cid, prop, _, _ in params]
    fn = (f"function() {{ var a = arguments; var values = {json.dumps(index)}.map(function (i) {{ return a[i]; }}); "
          f"return window.tracescreenUrl.push({json.dumps(path)}, {json.dumps(names)}, "
          f"{json.dumps(kinds)}, {json.dumps(defaults)}, {json.dumps(shared_names)}, {json.dumps(links)}, values); }}")
    callbacks.clientside_callback(fn, Output(store_id, "data"), *[Input(cid, prop) for cid, prop in inputs])


#: pages whose filters are the shared ones (module name -> path): their navigation links carry them
SHARED_FILTER_PAGES = {"overview": "/", "map": "/map"}
