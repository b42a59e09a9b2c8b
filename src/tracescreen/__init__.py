"""tracescreen: screen trace-metal results from water monitoring against cited limit tables.

A screening aid only: the responsible authority, under local regulations and on accredited
laboratory results, decides compliance.
"""

__version__ = "0.1.0"
