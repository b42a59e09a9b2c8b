"""Colours of the dashboard's charts that are not statuses (statuses: :mod:`tracescreen.vocabulary`).

Every status is shown with its words, shape and colour from :mod:`tracescreen.vocabulary`, the same
everywhere (engine, report, dashboard); here are only the lines drawn beside the results.
"""

from __future__ import annotations

#: line dash patterns for limit lines, cycled per limit table
LIMIT_DASHES: tuple[str, ...] = ("dash", "dot", "dashdot", "longdash", "longdashdot", "solid")
LIMIT_COLOUR = "#0072B2"  # Okabe-Ito blue [OkabeIto2008]_
TREND_COLOUR = "#000000"
PERIOD_COLOUR = "#A8527F"  # Okabe-Ito reddish purple, darkened: period values and their limits
