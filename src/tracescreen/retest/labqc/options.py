"""What a run asks of the laboratory QC review and the calibration checks.

Light to import (no pandas at import time): the command line builds its options from here.
"""

from __future__ import annotations

from dataclasses import dataclass

WEIGHTINGS = ("none", "1/x", "1/x2", "auto")


@dataclass(frozen=True)
class LabQcOptions:
    """Options of the laboratory QC review (:mod:`tracescreen.retest.labqc`) and the calibration
    checks (:mod:`tracescreen.retest.calibration`).

    Attributes
    ----------
    weighting : {"none", "1/x", "1/x2", "auto"}
        Calibration fit weighting; ``auto``: 1/x² where replicate spread grows with concentration.
    windows : str or None
        A QC windows file of the project's own plan; None: the shipped defaults
        (``data/lab_qc_windows.yaml``).
    """

    weighting: str = "auto"
    windows: str | None = None

    def describe(self) -> dict[str, str]:
        """The settings in words, for reports."""
        return {"laboratory QC windows": "the laboratory's own limits where the file gives them, otherwise "
                                         + (self.windows or "the US EPA National Functional Guidelines (2020) "
                                                            "defaults of lab_qc_windows.yaml"),
                "calibration fit weighting": self.weighting}
