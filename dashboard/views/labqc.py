"""The Lab QC page's data: the engine's laboratory QC review of a session, per batch and element.

The review is the engine's (:func:`tracescreen.retest.labqc.review.review_load`, and
:func:`tracescreen.retest.calibration.review.review_calibration` for calibration files), run once
per session on its accepted results and the rows the loader set aside (the QC rows keep every
original column). These functions only cut it for the page: the batches, one batch's verdicts with
the number of results each speaks for, and the results one verdict qualifies.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd

from dashboard.state.frames import accepted_from_session
from dashboard.state.session import SessionData

BATCH_COLUMNS = ["lab", "batch", "results", "qc_rows", "outside", "not_judged", "results_qualified", "qualifiers",
                 "elements_absent"]
VERDICT_COLUMNS = ["element_name", "analyte", "fraction", "qc_sample_id", "value", "window_low", "window_high",
                   "window_from", "verdict", "detect_qualifier", "nondetect_qualifier", "affected", "rule", "source",
                   "checked"]
AFFECTED_COLUMNS = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "value_ug_L", "detected",
                    "detection_limit_ug_L", "qualifier_given", "lab_qc_qualifier", "rule"]
CALIBRATION_COLUMNS = ["analyte", "run", "weighting", "n", "slope", "intercept", "r", "residual_sd",
                       "lack_of_fit_p", "lod_ug_L", "loq_ug_L", "lowest_standard_ug_L", "highest_standard_ug_L",
                       "max_abs_back_calc_error_pct"]


def lab_qc(session: SessionData):
    """(review, results, calibration) of a session, computed once: the engine's laboratory QC review
    (None when the session has no laboratory QC rows), the accepted results it was run on, and the
    calibration review (None without calibration files)."""

    def compute():
        from tracescreen.retest.labqc.review import review_load

        results = accepted_from_session(session)
        reading = session.reading
        loaded = SimpleNamespace(set_aside=session.set_aside, accepted=results)
        review = review_load(loaded, session.qc_files, getattr(reading, "column_map", None),
                             getattr(reading, "date_order", "iso"), getattr(reading, "encoding", "utf-8"))
        calibration = None
        if session.calibration_files:
            from tracescreen.retest.calibration.review import review_calibration

            calibration = review_calibration(session.calibration_files, results,
                                             encoding=getattr(reading, "encoding", "utf-8"))
        return review, results, calibration

    return session.derived("lab_qc", compute)


def batch_table(review) -> pd.DataFrame:
    """One row per batch with its counts (the page's first table)."""
    if review is None:
        return pd.DataFrame(columns=BATCH_COLUMNS)
    return review.batches[BATCH_COLUMNS].reset_index(drop=True)


def batch_options(review) -> list[dict]:
    """Dropdown options, one per batch, worst first (most QC values outside, then most not judged)."""
    if review is None or review.batches.empty:
        return []
    b = review.batches.reset_index(drop=True)
    order = np.lexsort((b.index.to_numpy(), -b["not_judged"].to_numpy(), -b["outside"].to_numpy()))
    return [{"label": f"{b.at[i, 'batch'] or '(no batch)'}" + (f" ({b.at[i, 'lab']})" if b.at[i, "lab"] else "")
             + f": {b.at[i, 'outside']} outside, {b.at[i, 'not_judged']} not judged", "value": int(i)}
            for i in order]


def narrative(review, batch: int | None) -> str:
    """The data review narrative of one batch (row of ``review.batches``)."""
    if review is None or batch is None or not 0 <= batch < len(review.batches):
        return ""
    return str(review.batches["narrative"].iloc[batch])


def _in_batch(review, batch: int) -> np.ndarray:
    b = review.batches.iloc[batch]
    v = review.verdicts
    return ((v["lab"].astype(str) == str(b["lab"])) & (v["batch"].astype(str) == str(b["batch"]))).to_numpy()


def element_options(review, batch: int | None) -> list[dict]:
    """The elements reviewed in a batch, as dropdown options."""
    if review is None or batch is None or not 0 <= batch < len(review.batches):
        return []
    v = review.verdicts[_in_batch(review, batch)]
    names = v.drop_duplicates("element")[["element", "element_name"]]
    return [{"label": n, "value": e} for e, n in zip(names["element"], names["element_name"])]


def verdict_table(review, batch: int | None, element: str | None = None, outside_only: bool = False) -> pd.DataFrame:
    """A batch's verdicts (outside and not judged first), with ``affected``: the results each qualifies,
    and ``verdict_pos``: the verdict's position in the review (to find its results)."""
    if review is None or batch is None or not 0 <= batch < len(review.batches):
        return pd.DataFrame(columns=["verdict_pos", *VERDICT_COLUMNS])
    mask = _in_batch(review, batch).copy()
    v = review.verdicts
    if element:
        mask = mask & (v["element"] == element).to_numpy()
    if outside_only:
        mask = mask & (v["verdict"] != "within").to_numpy()
    pos = np.flatnonzero(mask)
    counts = review.links["verdict_pos"].value_counts()
    out = v.iloc[pos][VERDICT_COLUMNS[:11] + VERDICT_COLUMNS[12:]].assign(
        affected=counts.reindex(pos).fillna(0).astype(int).to_numpy(), verdict_pos=pos)
    rank = out["verdict"].map({"below": 0, "above": 0, "not_judged": 1, "within": 2}).to_numpy()
    out = out.iloc[np.lexsort((out["analyte"].astype(str).to_numpy(), rank))]
    return out[["verdict_pos", *VERDICT_COLUMNS]].reset_index(drop=True)


def affected_results(review, results: pd.DataFrame, verdict_pos: int | None) -> pd.DataFrame:
    """The results one verdict qualifies, with the qualifier it gives and the result's combined one."""
    if review is None or verdict_pos is None:
        return pd.DataFrame(columns=AFFECTED_COLUMNS)
    lk = review.links[review.links["verdict_pos"] == verdict_pos]
    pos = lk["result_pos"].to_numpy()
    cols = [c for c in AFFECTED_COLUMNS[:8] if c in results.columns]
    out = results.iloc[pos][cols].reset_index(drop=True)
    out["qualifier_given"] = lk["qualifier"].to_numpy()
    out["lab_qc_qualifier"] = review.qualified["lab_qc_qualifier"].to_numpy()[pos]
    out["rule"] = lk["rule"].to_numpy()
    return out


def calibration_table(calibration) -> pd.DataFrame:
    """The calibration fits with their LOD and LOQ (empty without calibration files)."""
    if calibration is None:
        return pd.DataFrame(columns=CALIBRATION_COLUMNS)
    return calibration.fits[CALIBRATION_COLUMNS].reset_index(drop=True)
