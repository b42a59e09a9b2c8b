"""Rows of the retest list: their columns, reason codes' suggested actions, and the helpers that build them.

Every retest check returns rows with the columns :data:`RETEST_COLUMNS`: one row per flagged result
and reason, with a detail a laboratory can act on and a suggested action. Concentrations are in
µg/L throughout.

The checks select on the screening table as it comes (text as categoricals: comparisons, merges and
sorts work on their integer codes) and turn text into plain strings only for the rows they flag
(:func:`flagged_text`), where the details are written: the cost follows the flagged rows, not the
size of the run.
"""

from __future__ import annotations

import weakref

import numpy as np
import pandas as pd
import pyarrow.compute as pc

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
    if _made(screening, "single"):  # made by this function already (each result flag is given its rows)
        return screening
    site = site_samples(screening)
    if "basis" in site.columns:
        basis = site["basis"]
        mask = (basis.isna() | basis.isin(["single_sample", ""])).to_numpy()
        site = site if mask.all() else site[mask]
    return _mark(site, "single")


def flagged_text(frame: pd.DataFrame) -> pd.DataFrame:
    """The flagged rows with plain text columns (missing text as ``""``), ready for the details: as
    :func:`tracescreen._internal.frames.plain_text`, decoding only the categories these rows use (a
    run's sample ids are a million categories; a part flags a few thousand rows)."""
    out = frame.copy(deep=False)
    for c in out.columns:
        col = out[c]
        if isinstance(col.dtype, pd.CategoricalDtype):
            codes = col.cat.codes.to_numpy()
            vals = np.full(len(codes), "", dtype=object)
            ok = codes >= 0
            vals[ok] = np.asarray(col.cat.categories.take(codes[ok]), dtype=object)
            out[c] = pd.Series(vals, index=out.index, dtype=object)
    return out


def nonblank(col: pd.Series) -> np.ndarray:
    """Cells holding text (neither missing nor ``""``), as a boolean array; fast on categoricals."""
    return (col.notna() & col.ne("")).to_numpy(dtype=bool)


def text_rank(col: pd.Series):
    """A sort key that orders ``col`` as its plain text (missing as ``""``): for a categorical, the rank
    of each row's category among the categories' text (integers, whatever order the categories are
    in); other columns as they are."""
    if not isinstance(col.dtype, pd.CategoricalDtype):
        return col
    cats, codes = col.cat.categories, col.cat.codes.to_numpy()
    if _strictly_ascending(cats):  # (sorted, unique) the codes are in text order
        missing = -1 if not len(cats) or cats[0] != "" else 0  # missing sorts as "", the least text
        return pd.Series(np.where(codes < 0, missing, codes), index=col.index)
    used, where = np.unique(codes, return_inverse=True)  # the categories in use, text sorted once each
    text = np.where(used < 0, "", np.asarray(cats.astype(object), dtype=object)[np.maximum(used, 0)])
    _, rank = np.unique(text.astype(str), return_inverse=True)
    return pd.Series(rank[where], index=col.index)


def _strictly_ascending(cats: pd.Index) -> bool:
    """``cats.is_monotonic_increasing and cats.is_unique``, by Arrow's compare kernels for text held by
    Arrow (a run's sample ids are a million categories: pandas would make a Python string of each and
    hash it). Arrow compares UTF-8 bytes, whose order is the order of code points, as Python compares str."""
    arrow = getattr(cats.array, "__arrow_array__", None)
    if arrow is None or cats.dtype != "str" or len(cats) < 2:
        return cats.is_monotonic_increasing and cats.is_unique
    text = arrow()
    return bool(pc.all(pc.less(text[:-1], text[1:])).as_py())


def sort_as_text(frame: pd.DataFrame, keys: list[str]) -> pd.DataFrame:
    """``frame.sort_values(keys, kind="stable")`` as if its text columns were plain text (see :func:`text_rank`)."""
    order = pd.DataFrame({k: text_rank(frame[k]) for k in keys}).sort_values(keys, kind="stable").index
    return frame.loc[order]


def meaning_mask(col: pd.Series, wanted: set[str]) -> np.ndarray:
    """:func:`tracescreen.io.qualifiers.has_meaning` of a qualifier-meaning column, worked out once per
    distinct text (a categorical's categories) and spread to the rows by their codes."""
    from tracescreen.io.qualifiers import has_meaning

    if isinstance(col.dtype, pd.CategoricalDtype):
        cats = np.append(np.asarray(col.cat.categories.astype(object), dtype=object), "")  # code -1 -> ""
        return has_meaning(cats, wanted)[col.cat.codes.to_numpy()]
    return has_meaning(col.fillna("").astype(str).to_numpy(dtype=object), wanted)


def results_from_screening(screening: pd.DataFrame) -> pd.DataFrame:
    """One row per accepted result from the screening table (drops the per-limit repetition)."""
    if _made(screening, "results"):  # made by this function already (each check is given the results)
        return screening.reset_index(drop=True)
    ids = result_ids(screening)
    if ids is None:
        key = [c for c in RESULT_KEY if c in screening.columns]
        out = screening.drop_duplicates(key).reset_index(drop=True) if key else screening.reset_index(drop=True)
    else:
        first = first_of_each(ids)
        out = (screening if first.all() else screening[first]).reset_index(drop=True)
    return _mark(out, "results")


#: Frames made by :func:`results_from_screening` and :func:`single_sample_rows`, by kind and identity
#: (weak: an entry goes with its frame): the checks given such a frame do not select its rows again.
_MADE: weakref.WeakValueDictionary = weakref.WeakValueDictionary()


def _mark(frame: pd.DataFrame, kind: str) -> pd.DataFrame:
    _MADE[(kind, id(frame))] = frame
    return frame


def _made(frame: pd.DataFrame, kind: str) -> bool:
    return _MADE.get((kind, id(frame))) is frame


def first_of_each(ids: np.ndarray) -> np.ndarray:
    """Whether each row is the first of its id (``~pandas.Series(ids).duplicated()``). A screening table
    lists each result's limit rows together: when the first rows of the runs of equal ids rise (input
    order), or are all different, no id comes back later and they are the answer, found without hashing
    every row; otherwise pandas' hashing of every row."""
    head = np.empty(len(ids), dtype=bool)
    if len(ids):
        head[0] = True
        np.not_equal(ids[1:], ids[:-1], out=head[1:])
        starts = ids[head]
        if (starts[1:] > starts[:-1]).all() or not pd.Series(starts).duplicated().any():
            return head
    return ~pd.Series(ids).duplicated().to_numpy()


def result_ids(frame: pd.DataFrame) -> np.ndarray | None:
    """One integer per accepted result (equal :data:`RESULT_KEY` values, equal integers), or None when the
    frame lacks the key or the integers would not fit: a key that compares, merges and de-duplicates as
    one int64 column instead of three. Kept for the frames of :func:`results_from_screening` and
    :func:`single_sample_rows` (several checks key the same part's rows)."""
    key = [c for c in RESULT_KEY if c in frame.columns]
    if not key:
        return None
    if id(frame) in _IDS and (_made(frame, "single") or _made(frame, "results")):
        return _IDS[id(frame)]
    ids = _result_ids(frame, key)
    if ids is not None and (_made(frame, "single") or _made(frame, "results")):
        _IDS[id(frame)] = ids
        weakref.finalize(frame, _IDS.pop, id(frame), None)
    return ids


#: :func:`result_ids` of the frames made by this module, by identity (an entry goes with its frame).
_IDS: dict[int, np.ndarray] = {}


def _result_ids(frame: pd.DataFrame, key: list[str]) -> np.ndarray | None:
    ids, span = np.zeros(len(frame), dtype=np.int64), 1
    for c in key:
        col = frame[c]
        if isinstance(col.dtype, pd.CategoricalDtype):
            codes, size = col.cat.codes.to_numpy().astype(np.int64) + 1, len(col.cat.categories) + 1
        elif col.dtype.kind in "iu" and len(col) and col.min() >= 0:
            codes = col.to_numpy(dtype=np.int64)
            size = int(codes.max()) + 1
        else:
            codes, uniques = pd.factorize(col, use_na_sentinel=False)
            codes, size = codes.astype(np.int64), max(len(uniques), 1)
        span *= size
        if span >= 2 ** 62:
            return None
        ids = ids * size + codes
    return ids


def retest_rows(frame: pd.DataFrame, reason: str, detail) -> pd.DataFrame:
    """Build retest rows (:data:`RETEST_COLUMNS`) from result rows (any text dtype), a reason and details."""
    frame = flagged_text(frame[[c for c in RETEST_COLUMNS[:7] if c in frame.columns]])
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
