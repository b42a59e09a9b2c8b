"""The report's tables in words: column headers and coded cells as people read them, numbers to the
precision the data supports, dates as ISO days.

Every report table keeps its codes (``site_id``, ``exceeds``, ``running_annual_mean``) in the
workbook's codes sheet and in the appendix "Codes and words" (:func:`codes_table`); what the reader
sees is :func:`in_words` of the table. Numbers: a result to the significant figures the laboratory
reported (``0.0572 mg/L`` is ``57.2 µg/L``), a limit as its table writes it, statistics to three
significant figures (common practice: no more figures than the data carry).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen import vocabulary
from tracescreen._internal.text import format_date, format_significant

#: Header words of every column code the report shows (codes missing here are shown with spaces
#: for underscores).
COLUMN_WORDS: dict[str, str] = {
    "site_id": "Site", "site_name": "Site name", "name": "Name", "sample_id": "Sample", "sampled_at": "Sampled",
    "analyte": "Metal", "fraction": "Fraction", "result_text": "Result as reported", "unit": "Unit",
    "value_ug_L": "Value (µg/L)", "limit_ug_L": "Limit (µg/L)", "ratio": "Value / limit",
    "limit_table": "Limit table", "use": "Water use", "duration": "Duration", "basis": "Basis", "source": "Source",
    "status": "Status", "note": "Note", "hardness_used_mg_L": "Hardness used (mg/L as CaCO₃)",
    "detection_limit_ug_L": "Detection limit (µg/L)", "sample_type": "Sample type", "lab": "Laboratory",
    "batch": "Batch", "reason": "Reason", "detail": "Detail", "suggested_action": "Suggested action",
    "n": "Results", "n_detected": "Detected", "percent_nondetect": "Non-detects (%)",
    "min_detected": "Lowest detected (µg/L)", "max_detected": "Highest detected (µg/L)",
    "max_detection_limit": "Highest detection limit (µg/L)", "mean": "Mean (µg/L)", "sd": "Standard deviation (µg/L)",
    "median": "Median (µg/L)", "p90": "90th percentile (µg/L)", "p95": "95th percentile (µg/L)",
    "ucl95_mean": "95 % upper confidence limit of the mean (µg/L)", "ucl_method": "Confidence limit method",
    "method": "Method", "n_nondetect": "Non-detects", "first_sampled": "First sampled", "last_sampled": "Last sampled",
    "test": "Trend test", "p_value": "p-value", "tau": "Kendall's tau", "slope_per_year": "Slope (µg/L per year)",
    "slope_low": "Slope, lower 95 % (µg/L per year)", "slope_high": "Slope, upper 95 % (µg/L per year)",
    "slope_method": "Slope method", "direction": "Direction", "lowest_limit_ug_L": "Lowest limit (µg/L)",
    "lowest_limit_table": "Lowest limit's table", "crosses_limit_on": "Trend line reaches the limit",
    "limit_min_ug_L": "Lowest limit (µg/L)", "limit_max_ug_L": "Highest limit (µg/L)", "n_above": "Above limit",
    "n_undecided": "Undecided", "proportion_above": "Proportion above", "ci95_low": "95 % interval, low",
    "ci95_high": "95 % interval, high", "file": "File", "sheet": "Sheet", "row": "Row", "sha256": "SHA-256",
    "kind": "Kind", "rows_read": "Rows read", "accepted": "Accepted", "rejected": "Rejected", "set_aside": "Set aside",
    "item": "Item", "value": "Value", "topic": "Topic", "table_id": "Table", "limit": "Limit",
    "effective_from": "In force from", "effective_to": "In force to", "url": "Address", "notes": "Notes",
    "period_value_ug_L": "Period value (µg/L)", "count": "Count", "results": "Results", "sites": "Sites",
    "n_samples": "Samples", "n_sites": "Sites",
}

#: Columns whose cells are codes, shown with spaces for underscores (statuses get their labels).
CODED_COLUMNS = frozenset({"fraction", "use", "duration", "basis", "reason", "direction", "method", "test",
                           "slope_method", "sample_type", "kind", "status"})

#: Columns of computed statistics, shown to three significant figures.
STATISTIC_DIGITS = 3
#: Columns shown as whole numbers.
COUNT_COLUMNS = frozenset({"n", "n_detected", "n_nondetect", "n_above", "n_undecided", "row", "rows_read",
                           "accepted", "rejected", "set_aside", "count", "results", "sites", "n_samples",
                           "n_sites"})


def column_words(code: str) -> str:
    """Header words of a column code."""
    return COLUMN_WORDS.get(code, str(code).replace("_", " ").capitalize())


def code_words(values: pd.Series) -> pd.Series:
    """Coded cells in words: a status by its label, other codes with spaces for underscores
    (vectorised over the distinct values)."""
    s = values.astype(object).where(values.notna(), "")
    codes, uniq = pd.factorize(s.astype(str))
    words = np.array([vocabulary.LABEL.get(u, u.replace("_", " ")) for u in uniq] + [""], dtype=object)
    return pd.Series(words[codes], index=values.index, dtype=object)


def result_precision(result_text: pd.Series) -> np.ndarray:
    """Significant figures of each result as the laboratory wrote it (at least 2, common practice)."""
    from tracescreen._internal.text import significant_figures

    return np.maximum(significant_figures(result_text), 2)


def cells(frame: pd.DataFrame, column: str, digits=None) -> pd.Series:
    """One column's cells as text: dates ISO, counts whole, numbers to ``digits`` significant figures
    (default :data:`STATISTIC_DIGITS`), coded cells in words, other text as it is."""
    col = frame[column]
    if pd.api.types.is_bool_dtype(col):
        return col.map({True: "yes", False: "no"}).fillna("").astype(object)
    if pd.api.types.is_datetime64_any_dtype(col):
        return format_date(col)
    if pd.api.types.is_numeric_dtype(col):
        if column in COUNT_COLUMNS:
            v = col.astype(float)
            return pd.Series(np.where(np.isfinite(v), np.char.mod("%.0f", np.nan_to_num(v)), ""), index=col.index,
                             dtype=object)
        return format_significant(col.astype(float), STATISTIC_DIGITS if digits is None else digits)
    if column in CODED_COLUMNS:
        return code_words(col)
    return col.astype(object).where(col.notna(), "").astype(str).astype(object)


def in_words(frame: pd.DataFrame, digits: dict | None = None) -> pd.DataFrame:
    """A table as the reader sees it: every cell text, headers in words.

    Parameters
    ----------
    frame : pandas.DataFrame
        A report table with code column names.
    digits : dict, optional
        Column -> significant figures (a number, or an array with one per row) for numeric columns
        not shown to :data:`STATISTIC_DIGITS`.

    Returns
    -------
    pandas.DataFrame
        Same rows, text cells, headers from :func:`column_words`.
    """
    digits = digits or {}
    out = {column_words(c): cells(frame, c, digits.get(c)) for c in frame.columns}
    return pd.DataFrame(out, index=frame.index).reset_index(drop=True)


def numeric_headers(frame: pd.DataFrame) -> tuple[str, ...]:
    """Header words of the numeric columns of a table in codes (right-aligned when shown)."""
    return tuple(column_words(c) for c in frame.columns
                 if pd.api.types.is_numeric_dtype(frame[c]) and not pd.api.types.is_bool_dtype(frame[c]))


def codes_table(columns) -> pd.DataFrame:
    """The appendix of codes: each column code shown in the report with its words, then each status
    code with its glyph, short word and label."""
    cols = sorted(set(columns))
    rows = [("column", c, column_words(c)) for c in cols]
    rows += [("status", s, f"{vocabulary.GLYPH[s]} {vocabulary.SHORT[s]}: {vocabulary.LABEL[s]}")
             for s in vocabulary.STATUSES]
    return pd.DataFrame(rows, columns=["kind", "code", "words"])
