"""Recovery of spikes: laboratory control samples (and duplicates), matrix spikes (and duplicates),
post-digestion spikes.

* Laboratory control sample (blank spike): recovery = 100 · found / true, the true value being the
  amount spiked. Default window 80–120 % (aqueous); below 50 % rejected [USEPA2020NFG]_.
* Matrix spike: recovery = 100 · (spiked − unspiked) / added (SW-846 Method 1312 §8.2.4, [1]_),
  an unspiked result below the detection limit taken as zero (CLP statement of work, as quoted in
  [2]_). Not judged when the unspiked sample exceeds 4 × the amount added: the spike is then lost
  in the sample's own variability [USEPA2020NFG]_. Default 75–125 %; 30–74 %: J- / UJ; below 30 %:
  J- / R; above 125 %: J+ (non-detects not qualified).
* Post-digestion spike: judged (75–125 %) and reported, never qualifies: it tells matrix
  interference from digestion loss when a matrix spike fails.

A spiked result reported as not detected counts as zero found. The recovery is computed from the
reported amounts where they are given, else the laboratory's reported recovery is used; both are
kept (``value``, ``reported_value``).

References
----------
.. [1] US EPA SW-846 Method 1312, Revision 0 (1990), section 8.2.4.
.. [2] WEF discussion forum, "Matrix spike recovery calculations" (2012), quoting the CLP
   inorganic statement of work, Exhibit C section 12.6.7: "When the sample concentration is less
   than the Method Detection Limit (MDL)...use zero...for purposes of calculating percent recovery."
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.verdicts import concat, edges, fmt, verdict_rows
from tracescreen.retest.labqc.windows import Window, load_windows, window_for

SPIKE_ELEMENTS = ("lcs", "lcsd", "ms", "msd", "post_digestion_spike")
MATRIX_SPIKES = ("ms", "msd", "post_digestion_spike")


def recovery(measured, true) -> np.ndarray:
    """Recovery of a standard or control sample [%]: 100 · measured / true (NaN where true ≤ 0).

    >>> float(recovery([18.4], [20.0])[0])
    92.0
    """
    m = np.asarray(measured, dtype=float)
    t = np.asarray(true, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(t > 0, 100.0 * m / t, np.nan)


def spike_recovery(spiked, unspiked, added) -> np.ndarray:
    """Recovery of a matrix spike [%]: 100 · (spiked − unspiked) / added (NaN where added ≤ 0).

    >>> float(spike_recovery([44500.0], [43100.0], [2000.0])[0])
    70.0
    """
    s = np.asarray(spiked, dtype=float)
    u = np.asarray(unspiked, dtype=float)
    a = np.asarray(added, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(a > 0, 100.0 * (s - u) / a, np.nan)


def review_spikes(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for the spike elements of a QC table (:data:`SPIKE_ELEMENTS`)."""
    w = windows or load_windows()
    parts = []
    for element in SPIKE_ELEMENTS:
        sub = qc[qc["element"] == element]
        if sub.empty:
            continue
        window = window_for(element, windows=w)
        found = sub["result_ug_L"].fillna(0.0).to_numpy(dtype=float)  # a spike not detected found nothing
        added = sub["spike_added_ug_L"].to_numpy(dtype=float)
        reported = sub["reported_recovery"].to_numpy(dtype=float)
        why = np.full(len(sub), "", dtype=object)
        if element in MATRIX_SPIKES:
            unspiked = sub["original_ug_L"].to_numpy(dtype=float)
            computed = spike_recovery(found, np.nan_to_num(unspiked, nan=0.0), added)
            computed = np.where(np.isnan(unspiked) & np.isfinite(reported), np.nan, computed)
            multiple = float(window.params.get("not_judged_sample_multiple", np.inf))
            big = np.isfinite(unspiked) & np.isfinite(added) & (unspiked > multiple * added)
            why[big] = [f"not judged: unspiked sample {u} µg/L > {multiple:g} x spike added {a} µg/L"
                        f" ({window.source})" for u, a in zip(fmt(unspiked[big]), fmt(added[big]))]
            detail = ("spiked " + fmt(found) + ", unspiked " + np.where(np.isnan(unspiked), "n/a", fmt(unspiked))
                      + ", added " + fmt(added) + " µg/L")
        else:
            true = sub["true_value_ug_L"].fillna(sub["spike_added_ug_L"]).to_numpy(dtype=float)
            computed = recovery(found, true)
            detail = "found " + fmt(found) + ", true " + fmt(true) + " µg/L"
        value = np.where(np.isfinite(computed), computed, reported)
        detail = detail + np.where(np.isfinite(reported), "; laboratory's recovery " + fmt(reported) + " %", "")
        lo, hi, src = edges(sub["recovery_low"], sub["recovery_high"], window)
        parts.append(verdict_rows(sub, window, element, value, lo, hi, src, reported=reported,
                                  not_judged_why=why, detail=detail))
    return concat(parts)
