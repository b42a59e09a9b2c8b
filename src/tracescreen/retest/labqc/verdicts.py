"""The verdict table: one row per judged QC value, the same columns for every QC element.

Each family module (:mod:`calibration_checks`, :mod:`spikes`, :mod:`precision`, :mod:`blanks`,
:mod:`interference`) computes its measure and calls :func:`verdict_rows`, which judges it against
its window (:func:`tracescreen.retest.labqc.windows.judge`) and writes the rule and the numbers
behind it in words.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_number
from tracescreen.retest.labqc.windows import Window, judge

VERDICT_COLUMNS = [
    "file", "sheet", "row", "element", "element_name", "qc_sample_id", "parent_sample_id", "lab", "batch",
    "prep_batch", "run", "method", "analyte", "fraction", "analysed_at", "measure", "value", "reported_value",
    "window_low", "window_high", "window_from", "verdict", "tier", "detect_qualifier", "nondetect_qualifier",
    "scope", "rule", "detail", "quantitation_limit_ug_L", "detection_limit_ug_L", "source", "checked", "where",
]
"""Columns of ``qc_verdicts.csv``.

``value`` is the measure (recovery %, RPD %, percent difference %, a blank's concentration in µg/L,
an ICS-A result in multiples of the quantitation limit); ``reported_value`` the laboratory's own
figure for it where the file gives one; ``window_from`` ``lab`` (the file's limits) or
``guideline`` (the default of ``source``); ``verdict`` within / below / above / not_judged;
``detect_qualifier`` / ``nondetect_qualifier`` what the affected results get."""

_UNITS = {"recovery": " %", "rpd": " %", "percent_difference": " %", "blank": " µg/L", "result_in_ql": " x QL",
          "absolute_difference_in_ql": " x QL"}
_WORDS = {"recovery": "recovery", "rpd": "RPD", "percent_difference": "%D", "blank": "blank",
          "result_in_ql": "result", "absolute_difference_in_ql": "|difference|"}


def fmt(values, digits: int = 4) -> np.ndarray:
    """Numbers as text with ``digits`` significant figures (NaN as ``""``), as an object array that
    concatenates with other text arrays (:func:`tracescreen._internal.text.format_number`)."""
    return format_number(np.asarray(values, dtype=float), digits).to_numpy(dtype=object)


def edges(lab_low, lab_high, window: Window) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Window edges per row: the lab's own where the row gives one, else the window's; and where
    each came from (``lab`` or ``guideline``)."""
    lab_low = np.asarray(lab_low, dtype=float)
    lab_high = np.asarray(lab_high, dtype=float)
    has_lab = np.isfinite(lab_low) | np.isfinite(lab_high)
    dlo = np.nan if window.low is None else window.low
    dhi = np.nan if window.high is None else window.high
    lo = np.where(has_lab, lab_low if window.low is not None else np.nan, dlo)
    hi = np.where(has_lab & np.isfinite(lab_high), lab_high, dhi)
    lo = np.where(has_lab & ~np.isfinite(lo) & (window.low is not None), dlo, lo)
    return lo, hi, np.where(has_lab, "lab", "guideline").astype(object)


def verdict_rows(qc: pd.DataFrame, window: Window, element: str, value, low, high, window_from,
                 *, reported=None, not_judged_why=None, detail=None, measure: str | None = None,
                 scope: str | None = None) -> pd.DataFrame:
    """Judge ``value`` for the QC rows ``qc`` and build their verdict rows.

    Parameters
    ----------
    qc : pandas.DataFrame
        The QC rows (QC table columns), one per value.
    window : Window
        The element's default window (tiers, source, scope).
    value, low, high, window_from : array-like
        The measure and its window edges per row (see :func:`edges`).
    reported : array-like, optional
        The lab's own figure for the measure.
    not_judged_why : array-like of str, optional
        Why a value is not judged (``""`` where it is); such values become NaN.
    detail : array-like of str, optional
        The numbers behind the measure in words.
    measure, scope : str, optional
        Override the window's measure or scope (e.g. the absolute-difference rule of duplicates).
    """
    n = len(qc)
    measure = measure or window.measure
    value = np.asarray(value, dtype=float).copy()
    why = np.full(n, "", dtype=object) if not_judged_why is None else np.asarray(not_judged_why, dtype=object)
    value[why != ""] = np.nan
    j = judge(value, low, high, window)
    label = np.array([window.label(a, b) if measure not in _UNITS or _UNITS[measure] == " %" else
                      _window_words(a, b, _UNITS[measure]) for a, b in zip(np.broadcast_to(low, (n,)),
                                                                           np.broadcast_to(high, (n,)))],
                     dtype=object)
    word = _WORDS.get(measure, measure)
    unit = _UNITS.get(measure, "")
    v = fmt(value)
    src = np.asarray(window_from, dtype=object)
    rule = np.where(j["verdict"] == "not_judged",
                    np.where(why != "", why, f"{word} not computable (values missing)"),
                    f"{word} " + v + unit + " " + np.where(j["verdict"] == "within", "within", "outside") +
                    " " + label + np.where(src == "lab", " (laboratory's limits)", f" ({window.source})"))
    tier_text = np.where(j["tier"] != "", "; tier " + j["tier"] + unit, "")
    rule = rule + tier_text
    out = pd.DataFrame({
        "file": qc["file"].to_numpy(), "sheet": qc["sheet"].to_numpy(), "row": qc["row"].to_numpy(),
        "element": element, "element_name": window.name if element == window.element or element not in ("msd", "lcsd")
        else window.name + " duplicate",
        "qc_sample_id": qc["qc_sample_id"].to_numpy(), "parent_sample_id": qc["parent_sample_id"].to_numpy(),
        "lab": qc["lab"].to_numpy(), "batch": qc["batch"].to_numpy(), "prep_batch": qc["prep_batch"].to_numpy(),
        "run": qc["run"].to_numpy(), "method": qc["method"].to_numpy(), "analyte": qc["analyte"].to_numpy(),
        "fraction": qc["fraction"].to_numpy(), "analysed_at": qc["analysed_at"].to_numpy(),
        "measure": measure, "value": value,
        "reported_value": np.full(n, np.nan) if reported is None else np.asarray(reported, dtype=float),
        "window_low": np.broadcast_to(np.asarray(low, dtype=float), (n,)),
        "window_high": np.broadcast_to(np.asarray(high, dtype=float), (n,)),
        "window_from": src, "verdict": j["verdict"], "tier": j["tier"],
        "detect_qualifier": j["detect_qualifier"], "nondetect_qualifier": j["nondetect_qualifier"],
        "scope": scope or window.scope, "rule": rule,
        "detail": np.full(n, "", dtype=object) if detail is None else np.asarray(detail, dtype=object),
        "quantitation_limit_ug_L": qc["quantitation_limit_ug_L"].to_numpy(dtype=float),
        "detection_limit_ug_L": qc["detection_limit_ug_L"].to_numpy(dtype=float),
        "source": window.source, "checked": window.checked, "where": window.where,
    })
    return out[VERDICT_COLUMNS]


def _window_words(lo, hi, unit: str) -> str:
    if not np.isfinite(lo):
        return f"<= {hi:g}{unit}"
    if not np.isfinite(hi):
        return f">= {lo:g}{unit}"
    return f"{lo:g} to {hi:g}{unit}"


def empty_verdicts() -> pd.DataFrame:
    """An empty verdict table with the right columns."""
    return pd.DataFrame({c: pd.Series(dtype=float if c in ("value", "reported_value", "window_low", "window_high",
                                                          "quantitation_limit_ug_L", "detection_limit_ug_L")
                                      else "datetime64[ns]" if c == "analysed_at" else
                                      "int64" if c == "row" else object) for c in VERDICT_COLUMNS})


def concat(parts: list[pd.DataFrame]) -> pd.DataFrame:
    """Concatenate verdict tables (empty parts dropped)."""
    parts = [p for p in parts if len(p)]
    return pd.concat(parts, ignore_index=True) if parts else empty_verdicts()
