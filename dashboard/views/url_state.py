"""The state of a page in its address: what the layout reads back from the query string.

Every page writes its controls into the address as they change (``assets/url_state.js``), so that
back, reload and a shared link show the same view; the page's ``layout(**query)`` reads them here.
Lists are written comma-separated (``uses=aquatic_life,drinking_water``); a grid's filter and sort
models as JSON (``exc_filter``, ``exc_sort``). Unreadable values are ignored (the default shows).
"""

from __future__ import annotations

import json

#: the filters every page that has them shares (carried across pages by the navigation links)
SHARED_FILTERS = ("uses", "tables", "fraction", "start", "end", "campaigns")


def as_list(value) -> list[str]:
    """A list parameter (``"a,b"`` or repeated) as a list of non-empty strings."""
    if value is None:
        return []
    items = value if isinstance(value, list) else [value]
    return [p for item in items for p in str(item).split(",") if p]


def as_text(value, default: str | None = None) -> str | None:
    """A single text parameter (the first one when repeated)."""
    if isinstance(value, list):
        value = value[0] if value else None
    return str(value) if value not in (None, "") else default


def as_choice(value, choices, default):
    """A parameter that must be one of ``choices``."""
    text = as_text(value)
    return text if text in choices else default


def _json(value, kind):
    text = as_text(value)
    if not text:
        return kind()
    try:
        out = json.loads(text)
    except ValueError:
        return kind()
    return out if isinstance(out, kind) else kind()


def grid_models(query: dict, prefix: str) -> tuple[dict, list]:
    """A grid's filter and sort models from the address (``{prefix}_filter``, ``{prefix}_sort``)."""
    return _json(query.get(f"{prefix}_filter"), dict), _json(query.get(f"{prefix}_sort"), list)


def shared_filters(query: dict) -> dict:
    """The shared filter values of the address, as the filter controls take them."""
    return {
        "uses": as_list(query.get("uses")), "tables": as_list(query.get("tables")),
        "fraction": as_text(query.get("fraction"), "all"),
        "start": as_text(query.get("start")), "end": as_text(query.get("end")),
        "campaigns": as_list(query.get("campaigns")),
    }
