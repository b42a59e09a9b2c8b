"""The laboratory QC review of a set of results: verdicts, qualified results, per-batch summary.

``review_lab_qc(results, qc)`` runs every element family on the QC table, links the verdicts that
qualify to the results of their batch, combines each result's qualifiers (most protective wins)
and summarises each batch for the data review narrative (:mod:`narrative`).

``qc_table(loaded, ...)`` gathers the QC rows of a load: the rows the loader set aside (original
cells kept), the laboratory blanks among the accepted results, and separate QC files.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from tracescreen.io.columns import ColumnMap
from tracescreen.retest.labqc import reasons
from tracescreen.retest.labqc.blanks import review_blanks
from tracescreen.retest.labqc.calibration_checks import review_calibration_checks
from tracescreen.retest.labqc.interference import review_ics, review_internal_standards, review_serial_dilutions
from tracescreen.retest.labqc.linking import link
from tracescreen.retest.labqc.precision import review_lab_duplicates, review_pairs
from tracescreen.retest.labqc.qualifiers import combine
from tracescreen.retest.labqc.reading import empty_qc, qc_from_cells, qc_from_results, read_qc_file
from tracescreen.retest.labqc.spikes import review_spikes
from tracescreen.retest.labqc.verdicts import concat
from tracescreen.retest.labqc.windows import Window, load_windows

QUALIFIED_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch", "sample_type", "result_text",
    "unit", "value_ug_L", "detected", "detection_limit_ug_L", "qualifier", "lab_qc_qualifier",
    "nondetect_limit_ug_L", "lab_qc_elements", "lab_qc_reasons", "file", "sheet", "row",
]
"""Columns of ``qualified_results.csv``: each accepted result with the review's qualifier
(``lab_qc_qualifier``; ``""`` = none), the elements that gave it, and their rules and numbers
(``lab_qc_reasons``). ``nondetect_limit_ug_L``: the level a result qualified ``U`` by a blank is now
a non-detect at. ``qualifier`` is the laboratory's own, as reported."""


@dataclass
class LabQcReview:
    """The outcome of a laboratory QC review."""

    qc: pd.DataFrame                 # the QC table (reading.QC_COLUMNS)
    verdicts: pd.DataFrame           # one row per judged QC value (verdicts.VERDICT_COLUMNS)
    links: pd.DataFrame              # one row per (verdict, result) with a qualifier (linking.LINK_COLUMNS)
    qualified: pd.DataFrame          # QUALIFIED_COLUMNS, one row per accepted result
    batches: pd.DataFrame            # one row per lab batch (narrative.BATCH_COLUMNS)
    retest: pd.DataFrame = field(default_factory=pd.DataFrame)  # reasons.RETEST_COLUMNS
    unrecognised: pd.DataFrame = field(default_factory=pd.DataFrame)  # UNRECOGNISED_COLUMNS

    def tables(self) -> dict[str, tuple[pd.DataFrame, str]]:
        """The output tables: name -> (table, file name)."""
        out = {"qc_rows": (self.qc, "qc_rows.csv"), "verdicts": (self.verdicts, "qc_verdicts.csv"),
               "qualified": (self.qualified, "qualified_results.csv"), "batches": (self.batches, "qc_batches.csv")}
        if len(self.unrecognised):
            out["unrecognised"] = (self.unrecognised, "qc_unrecognised.csv")
        return out

    def counts(self) -> dict[str, int]:
        """Verdict and qualifier counts, for summaries."""
        v = self.verdicts["verdict"].value_counts()
        q = self.qualified["lab_qc_qualifier"].value_counts()
        return {"qc_rows": len(self.qc), "verdicts": len(self.verdicts),
                **{f"verdict_{k}": int(v.get(k, 0)) for k in ("within", "below", "above", "not_judged")},
                **{f"qualified_{k}": int(q.get(k, 0)) for k in ("R", "UJ", "U", "J-", "J+", "J")}}


def review_verdicts(qc: pd.DataFrame, results: pd.DataFrame | None = None,
                    windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Every element family on a QC table -> the verdict table."""
    w = windows or load_windows()
    return concat([review_calibration_checks(qc, w), review_blanks(qc, w), review_ics(qc, w),
                   review_spikes(qc, w), review_pairs(qc, w), review_lab_duplicates(qc, results, w),
                   review_serial_dilutions(qc, results, w), review_internal_standards(qc, w)])


def _missing_qc(results: pd.DataFrame, qc: pd.DataFrame) -> np.ndarray:
    """Positions of non-blank results whose (lab) batch has no QC rows while other batches have."""
    if qc.empty or results.empty:
        return np.zeros(0, dtype=np.int64)
    have = pd.unique(qc["batch"].astype(str))
    miss = ~results["batch"].astype(object).fillna("").astype(str).isin(have).to_numpy()
    if "sample_type" in results.columns:
        miss &= (results["sample_type"] != "lab_blank").to_numpy()
    return np.flatnonzero(miss)


def review_lab_qc(results: pd.DataFrame, qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> LabQcReview:
    """Review the laboratory QC of ``results``.

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results (DEVELOPERS.md contract).
    qc : pandas.DataFrame
        The QC table (:func:`qc_table`, :func:`tracescreen.retest.labqc.reading.qc_from_cells`).
    windows : dict, optional
        Default windows (:func:`tracescreen.retest.labqc.windows.load_windows`).

    Returns
    -------
    LabQcReview
    """
    from tracescreen.retest.labqc.narrative import batch_summary

    w = windows or load_windows()
    results = results.reset_index(drop=True)
    verdicts = review_verdicts(qc, results, w)
    links = link(verdicts, results, w)
    det = results["detected"].to_numpy(dtype=bool) if len(results) else np.zeros(0, bool)
    combined = combine(links, det)
    qualified = qualified_results(results, combined)
    missing = _missing_qc(results, qc)
    retest = reasons.retest_rows(results, links, missing)
    batches = batch_summary(results, qc, verdicts, links, combined)
    return LabQcReview(qc, verdicts, links, qualified, batches, retest)


def qualified_results(results: pd.DataFrame, combined: pd.DataFrame) -> pd.DataFrame:
    """Each accepted result with its review qualifier (:data:`QUALIFIED_COLUMNS`)."""
    n = len(results)
    out = {c: results[c] for c in QUALIFIED_COLUMNS if c in results.columns}   # kept as they are (categoricals)
    q = np.full(n, "", dtype=object)
    el = np.full(n, "", dtype=object)
    why = np.full(n, "", dtype=object)
    ndl = np.full(n, np.nan)
    pos = combined["result_pos"].to_numpy(dtype=np.int64)
    q[pos], el[pos], why[pos] = combined["lab_qc_qualifier"], combined["lab_qc_elements"], combined["lab_qc_reasons"]
    ndl[pos] = combined["nondetect_limit_ug_L"]
    out.update({"lab_qc_qualifier": pd.Series(q, index=results.index), "lab_qc_elements": pd.Series(el, index=results.index),
                "lab_qc_reasons": pd.Series(why, index=results.index),
                "nondetect_limit_ug_L": pd.Series(ndl, index=results.index)})
    return pd.DataFrame({c: out[c] for c in QUALIFIED_COLUMNS if c in out}, copy=False)


UNRECOGNISED_COLUMNS = ["file", "sheet", "row", "qc_type", "analyte", "reason"]
"""Rows that are laboratory QC but not a QC element the review knows (``qc_unrecognised.csv``)."""


def qc_rows_read(set_aside: pd.DataFrame | None = None, accepted: pd.DataFrame | None = None, qc_files=(),
                 column_map: ColumnMap | None = None, date_order: str = "iso",
                 encoding: str = "utf-8") -> tuple[pd.DataFrame, pd.DataFrame]:
    """All QC rows of a load, and the QC rows the review cannot place (nothing dropped silently).

    QC rows: the set-aside laboratory QC rows, the accepted laboratory blanks and every row of the
    separate QC files whose QC type is a known element. Not placed (:data:`UNRECOGNISED_COLUMNS`):
    rows the loader set aside as laboratory QC, and QC-file rows, whose QC type is not one of the
    review's elements (``data/lab_qc_elements.yaml``).

    Raises
    ------
    ValueError
        A QC file cannot be read (the message names it).
    """
    parts, odd = [], []
    if set_aside is not None and len(set_aside):
        allq = qc_from_cells(set_aside, column_map, date_order, only_qc=False)
        is_lab_qc = set_aside["reason"].astype(str).str.contains("laboratory QC").to_numpy() \
            if "reason" in set_aside.columns else np.zeros(len(set_aside), bool)
        known = (allq["element"] != "").to_numpy()
        parts.append(allq[known])
        odd.append(allq[~known & is_lab_qc].assign(reason="laboratory QC row of no known element (set aside)"))
    parts.append(qc_from_results(accepted))
    for p in qc_files:
        allq = read_qc_file(p, column_map, date_order, encoding, only_qc=False)
        known = (allq["element"] != "").to_numpy()
        parts.append(allq[known])
        odd.append(allq[~known].assign(reason="QC-file row whose QC type is not a known element"))
    parts = [p for p in parts if len(p)]
    qc = pd.concat(parts, ignore_index=True) if parts else empty_qc()
    odd = [o for o in odd if len(o)]
    unrec = pd.concat(odd, ignore_index=True)[UNRECOGNISED_COLUMNS] if odd else \
        pd.DataFrame({c: pd.Series(dtype=object) for c in UNRECOGNISED_COLUMNS})
    return qc.reset_index(drop=True), unrec


def qc_table(set_aside: pd.DataFrame | None = None, accepted: pd.DataFrame | None = None, qc_files=(),
             column_map: ColumnMap | None = None, date_order: str = "iso", encoding: str = "utf-8") -> pd.DataFrame:
    """All QC rows of a load (:func:`qc_rows_read` without the rows it cannot place)."""
    return qc_rows_read(set_aside, accepted, qc_files, column_map, date_order, encoding)[0]


def review_load(loaded, qc_files=(), column_map: ColumnMap | None = None, date_order: str = "iso",
                encoding: str = "utf-8", windows: dict[str, Window] | None = None) -> LabQcReview | None:
    """The laboratory QC review of a load, or None when it has no laboratory QC rows.

    The review runs when the lab files carry QC rows (set aside by the loader) or QC files are
    given; the laboratory blanks among the accepted results then join it. A load without any
    laboratory QC rows gets no review (its lab blanks stay with the ``blank_contamination`` check).
    """
    lab_rows, unrecognised = qc_rows_read(loaded.set_aside, None, qc_files, column_map, date_order, encoding)
    if lab_rows.empty and unrecognised.empty:
        return None
    blanks = qc_from_results(loaded.accepted)
    qc = pd.concat([lab_rows, blanks], ignore_index=True) if len(blanks) else lab_rows
    review = review_lab_qc(loaded.accepted, qc, windows)
    review.unrecognised = unrecognised
    return review


def review_files(loaded, qc_files=(), column_map: ColumnMap | None = None, date_order: str = "iso",
                 encoding: str = "utf-8", windows: dict[str, Window] | None = None) -> LabQcReview:
    """The laboratory QC review of a load with its laboratory blanks, even when it has no
    laboratory QC rows (``tracescreen labqc``: the reviewer asked for it)."""
    qc, unrecognised = qc_rows_read(loaded.set_aside, loaded.accepted, qc_files, column_map, date_order, encoding)
    review = review_lab_qc(loaded.accepted, qc, windows)
    review.unrecognised = unrecognised
    return review
