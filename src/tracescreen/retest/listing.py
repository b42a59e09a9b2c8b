"""The retest list: every retest flag and QC check on a screening table, with its options.

``retest_list(screening)`` returns the rows of ``retest.csv`` (:data:`tracescreen.retest.rows.RETEST_COLUMNS`):
one row per flagged result and reason (several reasons give several rows).
"""

from __future__ import annotations

import pandas as pd

from tracescreen._internal.frames import plain_text
from tracescreen.retest import outliers, rows
from tracescreen.retest import qc_checks as qc
from tracescreen.retest import result_flags as flags
from tracescreen.retest.calibration.checks import REASONS as CALIBRATION_REASONS
from tracescreen.retest.labqc.reasons import REASONS as LAB_QC_REASONS
from tracescreen.retest.options import REASONS, RetestOptions

__all__ = ["LISTED_REASONS", "REASONS", "RetestOptions", "retest_list"]

LISTED_REASONS = REASONS + LAB_QC_REASONS + CALIBRATION_REASONS
"""Every reason code of ``retest.csv`` in listing order: the checks on the screening table, then
the laboratory QC review (:mod:`tracescreen.retest.labqc.reasons`) and the calibration checks
(:mod:`tracescreen.retest.calibration.checks`), whose rows are built by their review and passed in."""

def retest_list(screening: pd.DataFrame, options: RetestOptions | None = None,
                lab_qc: pd.DataFrame | None = None, blanks: pd.DataFrame | None = None) -> pd.DataFrame:
    """All retest flags and QC checks on a screening table.

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (DEVELOPERS.md contract), including QC samples (status ``qc_sample``).
    options : RetestOptions, optional
    lab_qc : pandas.DataFrame, optional
        Retest rows of the laboratory QC review and calibration checks
        (:attr:`tracescreen.retest.labqc.review.LabQcReview.retest`), listed with the others.
    blanks : pandas.DataFrame, optional
        Field and laboratory blank results of the whole run (accepted-results columns), when
        ``screening`` holds only some sites (a run in parts, :mod:`tracescreen.streaming`): a blank
        speaks for every sample of its batch.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`tracescreen.retest.rows.RETEST_COLUMNS`, sorted by site, sampling date, sample,
        analyte, fraction and reason (in :data:`LISTED_REASONS` order).
    """
    o = options or RetestOptions()
    unknown = set(o.reasons) - set(REASONS)
    if unknown:
        raise ValueError(f"unknown retest reason(s): {', '.join(sorted(unknown))}")
    screening = screening[[c for c in rows.USED_COLUMNS if c in screening.columns]]
    # selected once, text still categorical (fast); each check makes plain text of the rows it flags only
    results = rows.results_from_screening(screening)
    single = rows.single_sample_rows(screening)  # what the four result flags look at
    blanks = None if blanks is None else plain_text(blanks)  # few rows
    checks = {
        "first_exceedance": lambda: flags.first_exceedance(single, lookback=o.lookback),
        "above_range": lambda: flags.above_range(single),
        "dl_too_high": lambda: flags.dl_too_high(single),
        "near_limit": lambda: flags.near_limit(single, fraction=o.near_limit_fraction),
        "uncertainty_straddles_limit": lambda: flags.uncertainty_straddles_limit(single),
        "history_outlier": lambda: outliers.history_outlier(
            results, z_threshold=o.outlier_z, min_prior=o.outlier_min_prior),
        "duplicate_disagrees": lambda: qc.duplicate_disagrees(
            results, o.duplicate_rpd_percent, o.duplicate_rpd_min_multiple, o.duplicate_abs_multiple),
        "blank_contamination": lambda: qc.blank_contamination(results, o.blank_multiple, blanks=blanks),
        "dissolved_exceeds_total": lambda: qc.dissolved_exceeds_total(
            results, o.dissolved_percent, o.dissolved_min_multiple, o.dissolved_abs_multiple),
        "holding_time_exceeded": lambda: qc.holding_time_exceeded(results, o.holding_times),
    }
    parts = [checks[r]() for r in REASONS if r in o.reasons] + ([lab_qc] if lab_qc is not None else [])
    parts = [p for p in parts if not p.empty]
    if not parts:
        return rows.empty_retest()
    return sort_retest(pd.concat(parts, ignore_index=True))


def lab_qc_retest(review, calibration) -> pd.DataFrame | None:
    """The retest rows of the laboratory QC review and of the calibration checks, as one table (None when
    there are none); :func:`retest_list` lists them with the result- and series-side reasons."""
    parts = [t for t in (getattr(review, "retest", None), getattr(calibration, "retest", None))
             if t is not None and len(t)]
    return pd.concat(parts, ignore_index=True) if parts else None


def sort_retest(out: pd.DataFrame) -> pd.DataFrame:
    """Retest rows sorted by site, sampling date, sample, analyte, fraction and reason (:data:`LISTED_REASONS` order)."""
    out = out.assign(_order=out["reason"].map({r: i for i, r in enumerate(LISTED_REASONS)}))
    out = out.sort_values(["site_id", "sampled_at", "sample_id", "analyte", "fraction", "_order"],
                          kind="stable")
    return out.drop(columns="_order").reset_index(drop=True)
