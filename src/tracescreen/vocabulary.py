"""The status vocabulary, defined once: names in order of severity, labels, colours and shapes.

Screening (:mod:`tracescreen.screening.screen`), period rules, the report and the dashboard all
read the statuses from here, so that a status has one name, one rank, one label, one colour and
one shape everywhere.

Statuses, worst first (:data:`STATUSES`):

``exceeds``
    detected and value > limit; or a result reported as above the calibrated range (``>x``) with
    x > limit (the true value is at least x: a certain exceedance).
``above_range_inconclusive``
    reported as above the calibrated range (``>x``) with x <= limit: the true value is at least x,
    so the result cannot decide; dilute and reanalyse.
``nondetect_inconclusive``
    not detected, but the detection limit is above the limit: the result cannot decide; a lower
    detection limit is needed. A non-detect is never an exceedance.
``meets``
    detected and value <= limit (a value equal to the limit meets it).
``nondetect_meets``
    not detected, with detection limit <= limit.
``no_limit``
    no applicable entry, or hardness unknown for a hardness-dependent entry.
``qc_sample``
    field blanks, lab blanks and field duplicates: quality-control samples, not screened as site
    samples (the retest checks use them); never ranked with site samples.

Every status is shown with a text label and a marker shape as well as a colour, so nothing depends
on colour alone. The colours are the eight-colour set of Okabe and Ito [OkabeIto2008]_, designed
to stay distinct for the common forms of colour-vision deficiency (their yellow darkened, for
contrast on white); the tints are light versions
for table cell backgrounds.

Comparisons allow a relative tolerance of :data:`REL_TOL` so that unit conversion cannot turn an
equal value into an exceedance through binary floating-point error (0.007 mg/L is
7.000000000000001 µg/L in binary arithmetic).

References
----------
[OkabeIto2008]_ (docs/references.md)
"""

from __future__ import annotations

#: How dates that are not ISO 8601 are read: ``dmy`` (04/03/2021 = 4 March), ``mdy``; ``iso`` accepts ISO 8601 only.
DATE_ORDERS: tuple[str, ...] = ("iso", "dmy", "mdy")

#: Relative tolerance of every comparison of a value with a limit (screening, period rules, flags).
REL_TOL = 1e-9

#: Every status, worst first; a status's position here is its code in screening tables.
STATUSES: tuple[str, ...] = ("exceeds", "above_range_inconclusive", "nondetect_inconclusive", "meets",
                             "nondetect_meets", "no_limit", "qc_sample")
#: position of each status in :data:`STATUSES` (lower is worse)
STATUS_CODE: dict[str, int] = {s: i for i, s in enumerate(STATUSES)}
#: the statuses of site samples, worst first (``qc_sample`` is outside the ranking)
RANKED: tuple[str, ...] = STATUSES[:-1]
#: severity of each ranked status for maximum-reductions: higher is worse (the same order as
#: :data:`STATUSES`, counted from the other end); ``qc_sample`` has none
SEVERITY: dict[str, int] = {s: len(RANKED) - 1 - i for i, s in enumerate(RANKED)}
#: statuses that need someone's attention (a finding or a result that cannot decide)
ATTENTION: tuple[str, ...] = ("exceeds", "above_range_inconclusive", "nondetect_inconclusive")

LABEL: dict[str, str] = {
    "exceeds": "Above limit",
    "above_range_inconclusive": "Above the calibrated range, at or below limit (undecided)",
    "nondetect_inconclusive": "Not detected, DL above limit (undecided)",
    "meets": "Detected, within limit",
    "nondetect_meets": "Not detected, within limit",
    "no_limit": "No applicable limit",
    "qc_sample": "QC sample (not screened)",
}
#: short labels for matrix cells, badges and report cells
SHORT: dict[str, str] = {
    "exceeds": "above",
    "above_range_inconclusive": "over range",
    "nondetect_inconclusive": "undecided",
    "meets": "within",
    "nondetect_meets": "ND within",
    "no_limit": "no limit",
    "qc_sample": "QC",
}
COLOUR: dict[str, str] = {
    "exceeds": "#D55E00",  # vermillion
    "above_range_inconclusive": "#A08400",  # Okabe-Ito yellow darkened for contrast on white
    "nondetect_inconclusive": "#E69F00",  # orange
    "meets": "#009E73",  # bluish green
    "nondetect_meets": "#56B4E9",  # sky blue
    "no_limit": "#7A7A7A",  # neutral grey
    "qc_sample": "#CC79A7",  # reddish purple
}
#: status words and glyphs as text: the same hues darkened until they reach the WCAG 2.1 AA contrast of
#: 4.5:1 for text on white and on the status's own :data:`TINT` (WCAG 2.1, success criterion 1.4.3;
#: checked in tests/test_vocabulary.py with the standard's relative-luminance formula)
TEXT_COLOUR: dict[str, str] = {
    "exceeds": "#A84A00",
    "above_range_inconclusive": "#846D00",
    "nondetect_inconclusive": "#8E6200",
    "meets": "#007857",
    "nondetect_meets": "#367192",
    "no_limit": "#6B6B6B",
    "qc_sample": "#8E5474",
}
#: light backgrounds of table cells, one per status (same hue as :data:`COLOUR`)
TINT: dict[str, str] = {
    "exceeds": "#fbe3d4",
    "above_range_inconclusive": "#fcf8d0",
    "nondetect_inconclusive": "#fcefd2",
    "meets": "#dcf1ea",
    "nondetect_meets": "#e4f2fb",
    "no_limit": "#efefef",
    "qc_sample": "#f5e4ee",
}
#: plotly marker symbols; non-detects use open symbols (drawn at their detection limit)
SYMBOL: dict[str, str] = {
    "exceeds": "triangle-up",
    "above_range_inconclusive": "triangle-up-open",
    "nondetect_inconclusive": "diamond-open",
    "meets": "circle",
    "nondetect_meets": "circle-open",
    "no_limit": "square",
    "qc_sample": "x",
}
#: the same shapes as text glyphs, for tables, the report and the overview matrix
GLYPH: dict[str, str] = {
    "exceeds": "\u25b2",  # ▲
    "above_range_inconclusive": "\u25b3",  # △
    "nondetect_inconclusive": "\u25c7",  # ◇
    "meets": "\u25cf",  # ●
    "nondetect_meets": "\u25cb",  # ○
    "no_limit": "\u25a0",  # ■
    "qc_sample": "\u2715",  # ✕
}


# ----------------------------------------------------------------- wells against background

#: Statuses of a compared value over its retest sequence (tracescreen.statistics.background.sequence),
#: worst first, with a label, colour and marker shape each (the same palette as above).
SEQUENCE_STATUSES: tuple[str, ...] = ("confirmed_exceedance", "initial_exceedance", "resample_required",
                                      "inconclusive", "not_confirmed", "within")
SEQUENCE_LABEL: dict[str, str] = {
    "confirmed_exceedance": "Confirmed exceedance of background (statistically significant increase)",
    "initial_exceedance": "Initial exceedance: resample required",
    "resample_required": "Resample did not decide: another required",
    "inconclusive": "Inconclusive (non-detect above the limit, or incomplete mean)",
    "not_confirmed": "Not confirmed by resampling",
    "within": "Within the background limit",
}
SEQUENCE_COLOUR: dict[str, str] = {
    "confirmed_exceedance": COLOUR["exceeds"], "initial_exceedance": COLOUR["nondetect_inconclusive"],
    "resample_required": COLOUR["above_range_inconclusive"], "inconclusive": COLOUR["no_limit"],
    "not_confirmed": COLOUR["nondetect_meets"], "within": COLOUR["meets"],
}
SEQUENCE_SYMBOL: dict[str, str] = {
    "confirmed_exceedance": "triangle-up", "initial_exceedance": "triangle-up-open",
    "resample_required": "diamond-open", "inconclusive": "square-open", "not_confirmed": "circle-open",
    "within": "circle",
}
