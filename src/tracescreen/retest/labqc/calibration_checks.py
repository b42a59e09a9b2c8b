"""Calibration verification: initial and continuing calibration verification (ICV, CCV) and the
low-level check standard at the quantitation limit (CRQL check standard).

Recovery = 100 · found / true value. Defaults [USEPA2020NFG]_ (each from
``data/lab_qc_windows.yaml``, with its check status):

* ICV / CCV, ICP-AES and ICP-MS: 90–110 %; 75–89 %: J- / UJ; below 75 %: R / R; 111–125 %: J+
  (non-detects not qualified); above 125 %: R for detects.
* ICV / CCV, mercury by cold-vapour AA: 85–115 %, expanded limits 65 % and 135 %.
* Low-level check standard: 70–130 %, applied to results below 2 × the quantitation limit;
  50–69 %: J- / UJ; below 50 %: R; 131–180 %: J+; above 180 %: R for detects.

A CCV speaks for the results analysed between the neighbouring checks of the same analyte (scope
``bracket``, :mod:`tracescreen.retest.labqc.linking`); without analysis times, for its batch.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.spikes import recovery
from tracescreen.retest.labqc.verdicts import concat, edges, fmt, verdict_rows
from tracescreen.retest.labqc.windows import Window, load_windows, window_for

CHECK_ELEMENTS = ("icv", "ccv", "low_check")


def review_calibration_checks(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for ICV, CCV and low-level check standards of a QC table."""
    w = windows or load_windows()
    parts = []
    for element in CHECK_ELEMENTS:
        sub = qc[qc["element"] == element]
        if sub.empty:
            continue
        mercury = ((sub["technique"] == "cvaa") | (sub["analyte"] == "mercury")).to_numpy()
        for is_hg in (False, True):
            part = sub[mercury == is_hg]
            if part.empty:
                continue
            window = window_for(element, mercury=is_hg, windows=w)
            found = part["result_ug_L"].fillna(0.0).to_numpy(dtype=float)
            true = part["true_value_ug_L"].fillna(part["spike_added_ug_L"]).to_numpy(dtype=float)
            reported = part["reported_recovery"].to_numpy(dtype=float)
            computed = recovery(found, true)
            value = np.where(np.isfinite(computed), computed, reported)
            detail = "found " + fmt(found) + ", true " + fmt(true) + " µg/L" + np.where(
                np.isfinite(reported), "; laboratory's recovery " + fmt(reported) + " %", "")
            lo, hi, src = edges(part["recovery_low"], part["recovery_high"], window)
            if element == "low_check":
                # the standard is made at the quantitation limit: without a stated limit, its true value is it
                part = part.assign(quantitation_limit_ug_L=part["quantitation_limit_ug_L"].fillna(
                    pd.Series(true, index=part.index)))
            parts.append(verdict_rows(part, window, element, value, lo, hi, src, reported=reported, detail=detail))
    return concat(parts)
