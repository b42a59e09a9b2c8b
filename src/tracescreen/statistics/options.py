"""The statistics' method names and settings: what a run asks of the summaries and trend tests.

Light to import (no numpy or pandas at import time): the command line builds its options from here.
"""

from __future__ import annotations

from dataclasses import dataclass

#: Non-detect methods of the summaries: Kaplan-Meier, ROS, censored lognormal maximum likelihood
#: [Helsel2012]_, and substitution (only on request, always labelled in the output).
METHODS = ("kaplan_meier", "ros", "mle_lognormal", "substitution_zero", "substitution_half_dl", "substitution_dl")

#: Fewer values than this in a series: no trend test (direction ``too_few``; common practice).
MIN_VALUES = 8

#: How the upper confidence limit of the mean (``ucl95_mean``) is computed: Student's t on the
#: Kaplan-Meier mean and its standard error (the default; a few operations per series), or a seeded
#: percentile bootstrap of the Kaplan-Meier mean (``n_boot`` resamples per series).
UCL_METHODS = ("km_t", "bootstrap")

#: The statistics tables a run can compute.
TABLES = ("summary", "exceedances", "trends")


@dataclass(frozen=True)
class StatisticsOptions:
    """Settings of the summaries (``summary.csv``), exceedance rates and trend tests (``trends.csv``).

    Attributes
    ----------
    method : str
        Non-detect method of the summaries (:data:`METHODS`).
    ucl : str
        How ``ucl95_mean`` is computed (:data:`UCL_METHODS`).
    n_boot : int
        Bootstrap resamples for the upper confidence limit of the mean (``ucl="bootstrap"``).
    seed : int
        Seed of the bootstrap (the same seed gives the same limits).
    alpha : float
        Significance level of the two-sided trend test (slope interval 1 - alpha).
    seasonal : str
        ``auto`` (seasonal Kendall for monthly or quarterly sampling over 3+ years), ``always`` or ``never``.
    min_trend_values : int
        Fewer values than this: no trend test.
    tables : tuple of str
        Which of :data:`TABLES` to compute.
    """

    method: str = "kaplan_meier"
    ucl: str = UCL_METHODS[0]
    n_boot: int = 1000
    seed: int = 20240601
    alpha: float = 0.05
    seasonal: str = "auto"
    min_trend_values: int = MIN_VALUES
    tables: tuple = TABLES

    def notes(self) -> list[str]:
        """The methods in words, for the report's method notes."""
        return [
            f"Summaries: non-detects by {self.method} (Helsel 2012); series without non-detects use "
            "plain sample statistics; ucl95_mean " + (
                f"by a seeded percentile bootstrap of the Kaplan-Meier mean (B={self.n_boot}, seed={self.seed})."
                if self.ucl == "bootstrap" else
                "= Kaplan-Meier mean + t(0.95; n - 1) x its standard error (Helsel 2012; Singh et al. 2006)."),
            f"Trends: Mann-Kendall or seasonal Kendall (seasonal: {self.seasonal}) at alpha = {self.alpha}; "
            "non-detects count as ties where the order is unknown; Sen or Akritas-Theil-Sen slope per "
            "year from the sampling dates.",
        ]
