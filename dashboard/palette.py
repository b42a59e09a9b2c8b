"""Status vocabulary of the dashboard: order, text labels, colours and marker shapes.

Every status is shown with a text label and a marker shape as well as a colour, so nothing depends
on colour alone. The colours are the eight-colour set of Okabe and Ito, designed to stay distinct
for the common forms of colour-vision deficiency.

References
----------
.. [1] Okabe, M. and Ito, K. (2008). "Color Universal Design (CUD): how to make figures and
   presentations that are friendly to colorblind people." J*FLY, https://jfly.uni-koeln.de/color/
"""

from __future__ import annotations

# Worst first. `qc_sample` rows are quality-control samples, never ranked with site samples.
STATUS_ORDER: tuple[str, ...] = (
    "exceeds",
    "nondetect_inconclusive",
    "meets",
    "nondetect_meets",
    "no_limit",
)
#: rank used for "worst status": higher is worse; -1 for rows outside the ranking (QC samples)
STATUS_RANK: dict[str, int] = {s: len(STATUS_ORDER) - 1 - i for i, s in enumerate(STATUS_ORDER)}

STATUS_LABEL: dict[str, str] = {
    "exceeds": "Above limit",
    "nondetect_inconclusive": "Not detected, DL above limit (undecided)",
    "meets": "Detected, within limit",
    "nondetect_meets": "Not detected, within limit",
    "no_limit": "No applicable limit",
    "qc_sample": "QC sample (not screened)",
}
#: short labels for matrix cells and badges
STATUS_SHORT: dict[str, str] = {
    "exceeds": "above",
    "nondetect_inconclusive": "undecided",
    "meets": "within",
    "nondetect_meets": "ND within",
    "no_limit": "no limit",
    "qc_sample": "QC",
}
STATUS_COLOUR: dict[str, str] = {
    "exceeds": "#D55E00",  # vermillion
    "nondetect_inconclusive": "#E69F00",  # orange
    "meets": "#009E73",  # bluish green
    "nondetect_meets": "#56B4E9",  # sky blue
    "no_limit": "#7A7A7A",  # neutral grey
    "qc_sample": "#CC79A7",  # reddish purple
}
#: plotly marker symbols; non-detects use open symbols (drawn at their detection limit)
STATUS_SYMBOL: dict[str, str] = {
    "exceeds": "triangle-up",
    "nondetect_inconclusive": "diamond-open",
    "meets": "circle",
    "nondetect_meets": "circle-open",
    "no_limit": "square",
    "qc_sample": "x",
}
#: the same shapes as text glyphs, for tables and the overview matrix
STATUS_GLYPH: dict[str, str] = {
    "exceeds": "\u25b2",  # ▲
    "nondetect_inconclusive": "\u25c7",  # ◇
    "meets": "\u25cf",  # ●
    "nondetect_meets": "\u25cb",  # ○
    "no_limit": "\u25a0",  # ■
    "qc_sample": "\u2715",  # ✕
}
#: line dash patterns for limit lines, cycled per limit table
LIMIT_DASHES: tuple[str, ...] = ("dash", "dot", "dashdot", "longdash", "longdashdot", "solid")
LIMIT_COLOUR = "#0072B2"  # Okabe-Ito blue
TREND_COLOUR = "#000000"


def status_text(status: str) -> str:
    """Glyph and label of a status, e.g. ``"▲ Above limit"`` (unknown statuses pass through)."""
    return f"{STATUS_GLYPH.get(status, '?')} {STATUS_LABEL.get(status, status)}"
