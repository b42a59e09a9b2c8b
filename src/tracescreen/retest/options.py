"""The retest checks' reason codes and thresholds: what a run asks of :func:`tracescreen.retest.listing.retest_list`.

Light to import (no pandas at import time): the command line builds its options from here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

REASONS = (
    "first_exceedance", "above_range", "dl_too_high", "near_limit", "uncertainty_straddles_limit",
    "history_outlier", "duplicate_disagrees", "blank_contamination", "dissolved_exceeds_total",
    "holding_time_exceeded",
)
"""Reason codes, in the order they are listed."""


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
        import pandas as pd

        from tracescreen.retest import qc_checks as qc

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
