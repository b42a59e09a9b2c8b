"""The tracescreen dashboard (Dash): screening results at a glance, per-site charts, exceedances.

This package imports the engine (``tracescreen``); the engine never imports it. Start it with
``tracescreen dashboard ...`` or ``python -m dashboard ...``.
"""
