"""Status vocabulary of the dashboard, from the engine's one definition (tracescreen.vocabulary).

Every status is shown with a text label and a marker shape as well as a colour, so nothing depends
on colour alone; the colours (Okabe and Ito) and their reference are in :mod:`tracescreen.vocabulary`.
"""

from __future__ import annotations

from tracescreen import vocabulary as _v

# Worst first. `qc_sample` rows are quality-control samples, never ranked with site samples.
STATUS_ORDER: tuple[str, ...] = _v.RANKED
#: rank used for "worst status": higher is worse; -1 for rows outside the ranking (QC samples)
STATUS_RANK: dict[str, int] = {s: len(STATUS_ORDER) - 1 - i for i, s in enumerate(STATUS_ORDER)}
STATUS_LABEL: dict[str, str] = _v.LABEL
#: short labels for matrix cells and badges
STATUS_SHORT: dict[str, str] = _v.SHORT
STATUS_COLOUR: dict[str, str] = _v.COLOUR
#: plotly marker symbols; non-detects use open symbols (drawn at their detection limit)
STATUS_SYMBOL: dict[str, str] = _v.SYMBOL
#: the same shapes as text glyphs, for tables and the overview matrix
STATUS_GLYPH: dict[str, str] = _v.GLYPH
#: line dash patterns for limit lines, cycled per limit table
LIMIT_DASHES: tuple[str, ...] = ("dash", "dot", "dashdot", "longdash", "longdashdot", "solid")
LIMIT_COLOUR = "#0072B2"  # Okabe-Ito blue
TREND_COLOUR = "#000000"

