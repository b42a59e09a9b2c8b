"""The retest list: every retest flag and QC check on a screening table, with its options.

``retest_list(screening)`` returns the rows of ``retest.csv`` (:data:`tracescreen.retest.rows.RETEST_COLUMNS`):
one row per flagged result and reason (several reasons give several rows).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd

from tracescreen.retest import outliers, qc_checks as qc, result_flags as flags, rows
from tracescreen.retest.calibration.checks import REASONS as CALIBRATION_REASONS
from tracescreen.retest.labqc.reasons import REASONS as LAB_QC_REASONS
from tracescreen._internal.frames import plain_text

REASONS = (
    "first_exceedance", "above_range", "dl_too_high", "near_limit", "uncertainty_straddles_limit",
    "history_outlier", "duplicate_disagrees", "blank_contamination", "dissolved_exceeds_total",
    "holding_time_exceeded",
)
"""Reason codes of the checks on a screening table, in the order they are listed."""

LISTED_REASONS = REASONS + LAB_QC_REASONS + CALIBRATION_REASONS
"""Every reason code of ``retest.csv`` in listing order: the checks on the screening table, then
the laboratory QC review (:mod:`tracescreen.retest.labqc.reasons`) and the calibration checks
(:mod:`tracescreen.retest.calibration.checks`), whose rows are built by their review and passed in."""


@dataclass(frozen=True)
class RetestOptions:
    """Thresholds of the retest flags and QC checks (defaults: see each function's docstring).

    Attributes
    ----------
    lookback : None, int or str
        First exceedance look-back: ``None`` whole history, an int number of earlier sampling
        dates, or a duration such as ``"730D"``.
    near_limit_fraction : float
        Near-limit share of a limit (0.8, common practice).
    outlier_z : float
        Modified z-score threshold (3.5, Iglewicz & Hoaglin 1993).
    outlier_min_prior : int
        Earlier detects needed for the history check (8).
    duplicate_rpd_percent, duplicate_rpd_min_multiple, duplicate_abs_multiple : float
        Field duplicate rule (30 %, 5 × DL, 1 × DL; common practice).
    blank_multiple : float
        Blank rule (5 × blank; common practice).
    dissolved_percent, dissolved_min_multiple, dissolved_abs_multiple : float
        Dissolved vs total rule (30 %, 5 × DL, 2 × DL; common practice).
    holding_times : dict or None
        Analyte → holding time; ``None`` uses :data:`tracescreen.retest.qc_checks.HOLDING_TIMES`.
    reasons : tuple of str
        Reasons to compute (default all).
    """

    lookback: object = None
    near_limit_fraction: float = 0.8
    outlier_z: float = 3.5
    outlier_min_prior: int = 8
    duplicate_rpd_percent: float = 30.0
    duplicate_rpd_min_multiple: float = 5.0
    duplicate_abs_multiple: float = 1.0
    blank_multiple: float = 5.0
    dissolved_percent: float = 30.0
    dissolved_min_multiple: float = 5.0
    dissolved_abs_multiple: float = 2.0
    holding_times: dict | None = None
    reasons: tuple = field(default=REASONS)

    def describe(self) -> dict[str, str]:
        """The thresholds in words, for reports."""
        holds = qc.HOLDING_TIMES if self.holding_times is None else self.holding_times
        lb = self.lookback
        lookback = ("all earlier results" if lb is None else f"{lb} earlier sampling dates"
                    if isinstance(lb, int) else f"{pd.Timedelta(lb).days} days")
        return {
            "retest reasons computed": ", ".join(self.reasons),
            "first exceedance look-back": lookback,
            "near limit": f">= {self.near_limit_fraction:g} of a limit",
            "history outlier": f"|modified z of ln value| > {self.outlier_z:g}, "
                               f">= {self.outlier_min_prior} earlier detects",
            "field duplicates": f"RPD > {self.duplicate_rpd_percent:g} % when both >= "
                                f"{self.duplicate_rpd_min_multiple:g} x DL, else |difference| > "
                                f"{self.duplicate_abs_multiple:g} x DL",
            "blanks": f"batch results below {self.blank_multiple:g} x a blank detected above its DL",
            "dissolved vs total": f"dissolved above total by > {self.dissolved_percent:g} % when both > "
                                  f"{self.dissolved_min_multiple:g} x DL, else by > "
                                  f"{self.dissolved_abs_multiple:g} x DL",
            "holding times": "; ".join(f"{'other metals' if a == '*' else a}: {qc.holding_label(h)}"
                                       for a, h in holds.items()),
        }


def retest_list(screening: pd.DataFrame, options: RetestOptions | None = None,
                lab_qc: pd.DataFrame | None = None) -> pd.DataFrame:
    """All retest flags and QC checks on a screening table.

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (DEVELOPERS.md contract), including QC samples (status ``qc_sample``).
    options : RetestOptions, optional
    lab_qc : pandas.DataFrame, optional
        Retest rows of the laboratory QC review and calibration checks
        (:attr:`tracescreen.retest.labqc.review.LabQcReview.retest`), listed with the others.

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
    # selected once while text is still categorical (fast), then as plain text for the messages
    results = plain_text(rows.results_from_screening(screening))
    single = plain_text(rows.single_sample_rows(screening))  # what the four result flags look at
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
        "blank_contamination": lambda: qc.blank_contamination(results, o.blank_multiple),
        "dissolved_exceeds_total": lambda: qc.dissolved_exceeds_total(
            results, o.dissolved_percent, o.dissolved_min_multiple, o.dissolved_abs_multiple),
        "holding_time_exceeded": lambda: qc.holding_time_exceeded(results, o.holding_times),
    }
    parts = [checks[r]() for r in REASONS if r in o.reasons] + ([lab_qc] if lab_qc is not None else [])
    parts = [p for p in parts if not p.empty]
    if not parts:
        return rows.empty_retest()
    out = pd.concat(parts, ignore_index=True)
    out["_order"] = out["reason"].map({r: i for i, r in enumerate(LISTED_REASONS)})
    out = out.sort_values(["site_id", "sampled_at", "sample_id", "analyte", "fraction", "_order"],
                          kind="stable")
    return out.drop(columns="_order").reset_index(drop=True)
