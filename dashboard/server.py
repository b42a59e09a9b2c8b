"""The dashboard's web server side: malformed callback requests answered 4xx, slow clients timed out,
uploads cleaned up when the server stops.

* :func:`guard_callbacks` checks every ``/_dash-update-component`` request before Dash reads it: a
  JSON object naming a callback of this app, with the inputs and states that callback declares
  (same ids and properties, in order) and values of the JSON type each property carries. A request
  that is not so is answered ``400`` with a one-line reason and logged as one line, never a
  traceback. A callback that still fails on a well-formed request is reported by the app's error
  banner (``dashboard.app.report_error``), never a ``500``.
* :class:`TimeoutRequestHandler` gives each connection of the built-in server a socket timeout, so
  that clients that send nothing (or trickle) are disconnected instead of holding a thread.
* :func:`serve` runs the built-in server and removes the uploaded files when it stops, on Ctrl+C or
  on ``SIGTERM`` (a service manager's stop).

For a team, serve the app with a production WSGI server instead (README "Dashboard"): see
:mod:`dashboard.wsgi`.
"""

from __future__ import annotations

import logging
import signal
from typing import Any

from werkzeug.serving import WSGIRequestHandler

#: Seconds a connection may stay silent before the built-in server closes it.
REQUEST_TIMEOUT_S = 15
#: Most inputs plus states one request may carry (this app's callbacks have at most a dozen).
MAX_ARGUMENTS = 64

log = logging.getLogger("tracescreen.dashboard")

_NONE = type(None)
_SCALAR = (str, int, float, bool, _NONE)
#: JSON types of the properties this app's callbacks read (others: any JSON).
PROPERTY_TYPES: dict[str, tuple] = {
    "value": (*_SCALAR, list),
    "n_clicks": (int, _NONE),
    "contents": (str, list, _NONE),
    "filename": (str, list, _NONE),
    "start_date": (str, _NONE),
    "end_date": (str, _NONE),
    "page_current": (int, _NONE),
    "page_size": (int, _NONE),
    "sort_by": (list, _NONE),
    "filter_query": (str, _NONE),
    "pathname": (str, _NONE),
    "search": (str, _NONE),
}
#: JSON types of the stores (``dcc.Store``) by id.
STORE_TYPES: dict[str, tuple] = {
    "dataset-key": (str, _NONE),
    "site-shown": (dict, _NONE),
    "up-file": (dict, _NONE),
    "up-mapping": (dict, _NONE),
    "up-token": (str, _NONE),
    "up-cap": (int, float),
}

#: The keys of the stores that hold an object, each a text (or empty) as the page writes them.
STORE_KEYS: dict[str, tuple[str, ...]] = {
    "site-shown": ("key", "site", "analyte", "fraction"),
    "up-file": ("contents", "filename"),
    "up-mapping": ("contents", "filename"),
}


class MalformedRequest(ValueError):
    """A callback request that this app would never send (the message says what is wrong)."""


def _check_value(dep: dict, declared: dict) -> None:
    prop, ident, value = dep.get("property"), dep.get("id"), dep.get("value")
    if ident != declared.get("id") or prop != declared.get("property"):
        if not isinstance(declared.get("id"), dict):  # pattern-matching ids are not compared
            raise MalformedRequest(f"argument {ident!r}.{prop!r} is not the callback's {declared.get('id')!r}."
                                   f"{declared.get('property')!r}")
    allowed = STORE_TYPES.get(ident) if prop == "data" else PROPERTY_TYPES.get(prop)
    if allowed and "value" in dep and not isinstance(value, allowed):
        raise MalformedRequest(f"{ident}.{prop}: a {type(value).__name__} is not a value it can have")
    if prop == "data" and isinstance(value, dict) and ident in STORE_KEYS:
        if set(value) != set(STORE_KEYS[ident]) or not all(isinstance(v, (str, _NONE)) for v in value.values()):
            raise MalformedRequest(f"{ident}.data: not the object the page stores there")
    if prop == "value" and isinstance(value, list) and not all(isinstance(v, _SCALAR) for v in value):
        raise MalformedRequest(f"{ident}.value: a list of values holds something else")


def _check_outputs(outputs: Any, output: str) -> None:
    """The request's outputs are exactly the callback's (ids and properties, in order)."""
    multi = output.startswith("..")
    expected = [tuple(o.rsplit(".", 1)) for o in (output[2:-2].split("...") if multi else [output])]
    given = outputs if isinstance(outputs, list) and multi else [outputs]
    if len(given) != len(expected) or not all(
            isinstance(o, dict) and isinstance(o.get("property"), str)
            and (o.get("id"), o["property"].split("@")[0]) == (i, p.split("@")[0])
            for o, (i, p) in zip(given, expected)):
        raise MalformedRequest("'outputs' are not the callback's outputs")


def check_request(body: Any, callback_map: dict) -> None:
    """Raise :class:`MalformedRequest` unless ``body`` is a callback request of this app."""
    if not isinstance(body, dict):
        raise MalformedRequest("the body is not a JSON object")
    output = body.get("output")
    if not isinstance(output, str) or output not in callback_map:
        raise MalformedRequest("no callback of this app has that output")
    cb = callback_map[output]
    if "callback" not in cb:
        raise MalformedRequest("that callback runs in the browser, not on the server")
    for part, declared_key in (("inputs", "inputs"), ("state", "state")):
        given = body.get(part, [])
        declared = cb.get(declared_key, [])
        if not isinstance(given, list) or len(given) != len(declared) or len(given) > MAX_ARGUMENTS:
            raise MalformedRequest(f"'{part}' must list the callback's {len(declared)} {part}")
        for dep, dec in zip(given, declared):
            if isinstance(dep, list):  # pattern-matching (ALL) arguments: one object per matched component
                if not str(dec.get("id", "")).startswith("{") or not all(
                        isinstance(d, dict) and isinstance(d.get("id"), (str, dict)) and isinstance(d.get("property"), str)
                        for d in dep):
                    raise MalformedRequest(f"an entry of '{part}' is a list where the callback takes one value")
                continue
            if not isinstance(dep, dict):
                raise MalformedRequest(f"an entry of '{part}' is not an object")
            _check_value(dep, dec)
    _check_outputs(body.get("outputs"), output)
    changed = body.get("changedPropIds", [])
    if not isinstance(changed, list) or not all(isinstance(x, str) for x in changed):
        raise MalformedRequest("'changedPropIds' must be a list of texts")


def guard_callbacks(app) -> None:
    """Check every callback request of ``app`` first (400 for a malformed one, see the module docstring)."""
    import flask

    endpoint = app.config.routes_pathname_prefix + "_dash-update-component"
    dispatch = app.server.view_functions[endpoint]

    def guarded(*args, **kwargs):
        body = flask.request.get_json(silent=True)
        try:
            check_request(body, app.callback_map)
        except MalformedRequest as exc:
            log.warning("malformed callback request from %s: %s", flask.request.remote_addr, exc)
            return flask.jsonify(error=f"malformed callback request: {exc}"), 400
        return dispatch(*args, **kwargs)

    guarded.__name__ = dispatch.__name__
    app.server.view_functions[endpoint] = guarded

    @app.server.errorhandler(400)
    def bad_request(err):  # e.g. a body that is not JSON: one line, no traceback
        return flask.jsonify(error="bad request"), 400


class TimeoutRequestHandler(WSGIRequestHandler):
    """The built-in server's handler with a socket timeout (:data:`REQUEST_TIMEOUT_S`) on each connection."""

    timeout = REQUEST_TIMEOUT_S


def serve(app, host: str, port: int, debug: bool = False) -> None:
    """Run the built-in server until Ctrl+C or SIGTERM; the store's uploaded files are removed on the way out."""
    from dashboard.state.store import STORE_EXTENSION

    def stop(signum, frame):
        raise SystemExit(0)

    previous = signal.signal(signal.SIGTERM, stop)
    try:
        app.run(host=host, port=port, debug=debug, request_handler=TimeoutRequestHandler)
    except KeyboardInterrupt:
        pass
    finally:
        signal.signal(signal.SIGTERM, previous)
        app.server.extensions[STORE_EXTENSION].close()
