"""tracescreen: screen trace-metal results from water monitoring against cited limit tables.

A screening aid only: the responsible authority, under local regulations and on accredited
laboratory results, decides compliance.

The public functions of every stage are available here (``tracescreen.screen``,
``tracescreen.kaplan_meier``, ``tracescreen.run``, ...), as well as in their stage packages
(``tracescreen.screening.screen.screen``). They are imported on first use, so ``import tracescreen``
and ``tracescreen --help`` stay fast.

Examples
--------
>>> import tracescreen
>>> tracescreen.classify([True], [12.0], [1.0], [10.0]).tolist()
['exceeds']
>>> "screen" in tracescreen.__all__
True
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

#: public name -> module that defines it (imported on first use)
_EXPORTS = {
    # one run, end to end
    "run": "tracescreen.pipeline", "Inputs": "tracescreen.pipeline", "Options": "tracescreen.pipeline",
    "Results": "tracescreen.pipeline",
    # reading
    "load_results": "tracescreen.io.loading", "LoadOptions": "tracescreen.io.loading",
    "LoadError": "tracescreen.io.loading", "load_sites": "tracescreen.io.sites",
    # limit tables
    "load_limits": "tracescreen.limits.load", "LimitTableError": "tracescreen.limits.load",
    "entries_in_force": "tracescreen.limits.in_force",
    # screening
    "screen": "tracescreen.screening.screen", "classify": "tracescreen.screening.status",
    "worst_status": "tracescreen.screening.status", "sample_hardness": "tracescreen.screening.hardness",
    "uncertainty_decision": "tracescreen.screening.uncertainty", "period_table": "tracescreen.screening.periods",
    # statistics
    "kaplan_meier": "tracescreen.statistics.censored",
    "censored_statistics_grouped": "tracescreen.statistics.censored", "ros": "tracescreen.statistics.ros",
    "lognormal_mle": "tracescreen.statistics.lognormal", "summarise": "tracescreen.statistics.summary",
    "exceedance_rates": "tracescreen.statistics.summary", "mann_kendall": "tracescreen.statistics.mann_kendall",
    "trend_table": "tracescreen.statistics.trends", "StatisticsOptions": "tracescreen.statistics.options",
    "well_statistics": "tracescreen.statistics.background.run",
    # retest
    "retest_list": "tracescreen.retest.listing", "RetestOptions": "tracescreen.retest.options",
    "review_lab_qc": "tracescreen.retest.labqc.review",
    # report and workspace
    "report_data": "tracescreen.report.tables", "build_report_html": "tracescreen.report.html",
    "open_workspace": "tracescreen.store.workspace", "export_parquet": "tracescreen.store.parquet",
    # words
    "CAUTION": "tracescreen.caution", "STATUSES": "tracescreen.vocabulary",
}

__all__ = sorted(_EXPORTS) + ["__version__"]


def __getattr__(name: str):
    """Import a public name's module on first use (PEP 562)."""
    if name in _EXPORTS:
        value = getattr(importlib.import_module(_EXPORTS[name]), name)
        globals()[name] = value  # later look-ups skip this function
        return value
    raise AttributeError(f"module 'tracescreen' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_EXPORTS))
