"""The calibration review of a run: every calibration file fitted, its limits, the MDL study, the
recomputed samples, and the results checked against it.

``review_calibration(paths, accepted)`` is called by the pipeline (``tracescreen screen``,
``report``) and by ``tracescreen labqc``; :meth:`CalibrationReview.tables` names its output tables.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from tracescreen.retest.calibration.checks import analyte_ranges, annotate_dl_too_high, check_results
from tracescreen.retest.calibration.fit import fit_curves, recompute_samples
from tracescreen.retest.calibration.limits import curve_limits, mdl
from tracescreen.retest.calibration.reading import read_calibration


@dataclass
class CalibrationReview:
    """What the calibration files say."""

    points: pd.DataFrame        # every usable point (reading.POINT_COLUMNS)
    rejected: pd.DataFrame      # rows not used: file, sheet, row, reason
    rows_read: int
    fits: pd.DataFrame          # per curve: fit.FIT_COLUMNS + sigma, sigma_from, lod_ug_L, loq_ug_L
    fitted: pd.DataFrame        # the standards with fitted value, residual, back-calculated concentration
    mdl: pd.DataFrame | None    # limits.MDL_COLUMNS, when the files hold an MDL study
    samples: pd.DataFrame       # fit.SAMPLE_COLUMNS: sample responses recomputed on their curve
    ranges: pd.DataFrame        # per analyte (and run): range of the standards, supported detection limit
    retest: pd.DataFrame        # retest rows of the results checked against the calibration

    def tables(self) -> dict[str, tuple[pd.DataFrame, str]]:
        """The output tables: name -> (table, file name)."""
        out = {"cal_fits": (self.fits, "calibration_fits.csv"), "cal_points": (self.fitted, "calibration_points.csv"),
               "cal_rejected": (self.rejected, "calibration_rejected.csv")}
        if self.mdl is not None:
            out["mdl"] = (self.mdl, "detection_limits.csv")
        if len(self.samples):
            out["cal_samples"] = (self.samples, "calibration_samples.csv")
        return out

    def annotate(self, retest: pd.DataFrame) -> pd.DataFrame:
        """The retest list with each ``dl_too_high`` detail saying what the calibration supports."""
        return annotate_dl_too_high(retest, self.ranges)


def review_calibration(paths, accepted: pd.DataFrame | None = None, weighting: str = "auto",
                       encoding: str = "utf-8") -> CalibrationReview:
    """Read, fit and check the calibration files ``paths`` against the accepted results.

    Raises
    ------
    tracescreen.retest.calibration.reading.CalibrationFileError
        A calibration file cannot be read (the message names it).
    """
    cals = [read_calibration(p, encoding) for p in paths]
    points = pd.concat([c.points for c in cals], ignore_index=True)
    rejected = pd.concat([c.rejected for c in cals], ignore_index=True)
    fits, fitted = fit_curves(points, weighting)
    limits = curve_limits(fits, points)
    spiked = points[points["kind"] == "mdl_spike"]
    blanks = points[points["kind"] == "mdl_blank"]
    mdls = mdl(spiked[["analyte", "result_ug_L"]], blanks[["analyte", "result_ug_L"]]) if len(spiked) else None
    ranges = analyte_ranges(limits, mdls)
    has_results = accepted is not None and len(accepted)
    return CalibrationReview(points, rejected, sum(c.rows_read for c in cals), limits, fitted, mdls,
                             recompute_samples(points, fits), ranges,
                             check_results(accepted if has_results else None, ranges))
