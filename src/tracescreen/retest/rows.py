"""Rows of the retest list: their columns, reason codes' suggested actions, and the helpers that build them.

Every retest check returns rows with the columns :data:`RETEST_COLUMNS`: one row per flagged result
and reason, with a detail a laboratory can act on and a suggested action. Concentrations are in
µg/L throughout.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_number
from tracescreen.statistics.series import censored_value, site_samples
from tracescreen.vocabulary import REL_TOL

RETEST_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch",
    "reason", "detail", "suggested_action",
]
"""Columns of ``retest.csv``, in order."""

USED_COLUMNS = [
    "file", "sheet", "row", "site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch",
    "sample_type", "parent_sample_id", "detected", "value_ug_L", "detection_limit_ug_L", "uncertainty_ug_L",
    "analysed_at", "status", "limit_ug_L", "limit_table", "use", "duration", "basis", "qualifier_meaning",
]
"""Columns of the screening table that the flags and QC checks read."""

RESULT_KEY = ["file", "sheet", "row"]
"""Provenance columns that identify one accepted result (one input row)."""

SERIES_KEY = ["site_id", "analyte", "fraction"]
"""A monitoring series: one site, one analyte, one fraction."""

SUGGESTED_ACTIONS = {
    "first_exceedance": (
        "Confirm before reporting: resample and reanalyse; check chain of custody, units and the "
        "laboratory's QC for the batch."),
    "dl_too_high": (
        "Ask the laboratory to reanalyse (or use a method) with a detection limit at or below the "
        "one needed."),
    "near_limit": (
        "Confirm with a repeat sample; consider closer monitoring of this site and analyte."),
    "uncertainty_straddles_limit": (
        "The result cannot be told apart from the limit at its stated uncertainty: ask for replicate "
        "analysis or a method with lower uncertainty."),
    "history_outlier": (
        "Check for a transcription, unit or sample-identity error; ask the laboratory to verify and "
        "reanalyse if the sample is still held."),
    "duplicate_disagrees": (
        "Review field and laboratory precision; reanalyse both samples of the pair or resample."),
    "blank_contamination": (
        "The result may be biased high by contamination: ask the laboratory to investigate the batch "
        "and resample with fresh blanks."),
    "dissolved_exceeds_total": (
        "Check filtration, preservation and sample labels; ask the laboratory to reanalyse both "
        "fractions."),
    "above_range": (
        "Above the calibrated range: ask the laboratory to dilute and reanalyse the sample (the "
        "result is only a lower bound)."),
    "holding_time_exceeded": (
        "The result is outside its holding time: resample and analyse within the holding time."),
}
"""Suggested action for each reason code (common practice)."""

#: relative tolerance for threshold comparisons (floating-point error of unit conversions)
RTOL = REL_TOL


def single_sample_rows(screening: pd.DataFrame) -> pd.DataFrame:
    """Site-sample rows compared with single-sample limits (period bases such as running annual
    means and percentiles are judged on periods, not on one result)."""
    site = site_samples(screening)
    if "basis" not in site.columns:
        return site
    basis = site["basis"].fillna("").astype(str)
    mask = basis.isin(["single_sample", ""])
    return site if mask.all() else site[mask]


def results_from_screening(screening: pd.DataFrame) -> pd.DataFrame:
    """One row per accepted result from the screening table (drops the per-limit repetition)."""
    key = [c for c in RESULT_KEY if c in screening.columns]
    if not key:
        return screening.reset_index(drop=True)
    return screening.drop_duplicates(key).reset_index(drop=True)


def retest_rows(frame: pd.DataFrame, reason: str, detail) -> pd.DataFrame:
    """Build retest rows (:data:`RETEST_COLUMNS`) from result rows, a reason and details."""
    out = pd.DataFrame(index=frame.index)
    for col in ("site_id", "sample_id", "sampled_at", "analyte", "fraction"):
        out[col] = frame[col]
    for col in ("lab", "batch"):
        out[col] = frame[col].fillna("") if col in frame.columns else ""
    out["reason"] = reason
    out["detail"] = detail
    out["suggested_action"] = SUGGESTED_ACTIONS[reason]
    out = out.sort_values(["site_id", "sampled_at", "sample_id", "analyte", "fraction"], kind="stable")
    return out[RETEST_COLUMNS].reset_index(drop=True)


def empty_retest() -> pd.DataFrame:
    """An empty retest table with the right columns."""
    return pd.DataFrame({c: pd.Series(dtype="datetime64[us]" if c == "sampled_at" else object)
                         for c in RETEST_COLUMNS})


def limit_label(frame: pd.DataFrame) -> pd.Series:
    """``table, use`` label of the limit on each screening row."""
    table = frame["limit_table"].fillna("").astype(str)
    label = table
    if "duration" in frame.columns:
        dur = frame["duration"].fillna("").astype(str)
        label = label + np.where(dur.ne(""), " " + dur, "")
    if "use" in frame.columns:
        label = label + ", " + frame["use"].fillna("").astype(str)
    return label


def ug(values) -> pd.Series:
    """Concentrations as text with their unit (``1.5 µg/L``; NaN gives `` µg/L``)."""
    return format_number(values) + " µg/L"


def shown(frame: pd.DataFrame, suffix: str = "") -> pd.Series:
    """Result as shown in a detail: ``1.2 µg/L`` or ``<0.5 µg/L``."""
    det = frame["detected" + suffix].astype(bool)
    return np.where(det, "", "<") + ug(censored_value(frame, suffix))
