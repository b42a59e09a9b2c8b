"""Deciding across fractions: total >= dissolved.

The dissolved fraction of a metal is the part that passes a 0.45 µm filter; the total
(recoverable) fraction includes it, so for one sample total >= dissolved (common practice; the
retest check ``dissolved_exceeds_total`` flags samples where a laboratory reports otherwise). Hence:

* a **dissolved result above a total-fraction limit** exceeds it: the total is at least as high;
* a **total result at or below a dissolved criterion** meets it: the dissolved is at most as high
  (a total non-detect whose detection limit is at or below the criterion, ``nondetect_meets``).

Any other cross-fraction comparison decides nothing and gives no row. A cross-fraction pair is
made only where the sample has no result of the limit's own fraction for that analyte (that
result is screened directly) and only for single-sample limits (period rules pool results of the
entry's own fraction). Rows decided so carry ``limit_fraction`` (the entry's fraction, different
from the result's) and a note. :func:`tracescreen.screening.screen.screen` makes these pairs
unless ``cross_fraction=False``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import STATUS_CODE

_SWAP = {"dissolved": "total", "total": "dissolved"}

#: Notes of rows decided across fractions, by the entry's fraction.
CROSS_NOTES = {
    "total": "decided from the dissolved result: total >= dissolved, so a dissolved value above a total limit exceeds it",
    "dissolved": "decided from the total result: dissolved <= total, so a total value within a dissolved criterion meets it",
}


def swapped(results: pd.DataFrame) -> pd.DataFrame:
    """The results with total and dissolved swapped (other fractions kept), to find the entries of
    the other fraction with :func:`tracescreen.screening.applicability.applicable_pairs`."""
    frac = results["fraction"].astype(str)
    return results.assign(fraction=frac.map(_SWAP).fillna(frac).to_numpy(dtype=object))


def lacks_other_fraction(results: pd.DataFrame) -> np.ndarray:
    """True where the same site, sample and analyte has no result of the other fraction."""
    key = ["site_id", "sample_id", "analyte"]
    own = pd.MultiIndex.from_frame(results[key + ["fraction"]].astype(str))
    other = pd.MultiIndex.from_frame(swapped(results)[key + ["fraction"]].astype(str))
    return ~np.asarray(other.isin(own), dtype=bool)


def deciding(status: np.ndarray, entry_fraction: np.ndarray) -> np.ndarray:
    """Which cross-fraction pairs decide (by their status as if the fractions were the same)."""
    to_total = entry_fraction == "total"  # a dissolved result against a total limit
    exceeds = status == STATUS_CODE["exceeds"]
    meets = (status == STATUS_CODE["meets"]) | (status == STATUS_CODE["nondetect_meets"])
    return np.where(to_total, exceeds, meets)
