"""What the pages share: their callbacks registered on one app, filter options and server-side tables.

A page records its callbacks on a :class:`PageCallbacks` (``callbacks = PageCallbacks()`` and
``@callbacks.callback(...)``) instead of Dash's process-wide ``dash.callback``; ``create_app``
registers every page's callbacks on its own app with the public ``app.callback`` and
``app.clientside_callback``. So several apps can live in one process (the tests start several),
each with its own callbacks, without reaching into Dash's private set-up.
"""

from __future__ import annotations

from typing import Callable

from dash import Input, Output

from dashboard.state.store import current_session
from dashboard.views.matrix import filter_options
from dashboard.views.tables import table_page


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


def register_server_table(callbacks: PageCallbacks, prefix: str, frame_for, page_size: int) -> None:
    """Callback serving the pages of table ``{prefix}-table`` from ``frame_for(session)``, with its
    ``{prefix}-count`` text and ``{prefix}-error`` message (filter, sort and paging on the server)."""

    @callbacks.callback(
        Output(f"{prefix}-table", "data"), Output(f"{prefix}-table", "page_count"),
        Output(f"{prefix}-count", "children"), Output(f"{prefix}-error", "children"),
        Output(f"{prefix}-table", "tooltip_data"),
        Input("dataset-key", "data"), Input(f"{prefix}-table", "page_current"),
        Input(f"{prefix}-table", "page_size"), Input(f"{prefix}-table", "sort_by"),
        Input(f"{prefix}-table", "filter_query"),
    )
    def serve_table_page(dataset_key, page_current, size, sort_by, filter_query):
        frame = frame_for(current_session(dataset_key))
        return table_page(frame, page_current, size or page_size, sort_by, filter_query)
