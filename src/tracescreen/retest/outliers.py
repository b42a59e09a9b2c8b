"""A result far outside its own series' history: the modified z-score against all earlier detects.

The loop in :func:`expanding_modified_z` runs over positions in a series, each step vectorised over
all series. Concentrations are in µg/L.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_number
from tracescreen.retest.rows import (
    SERIES_KEY,
    empty_retest,
    flagged_text,
    results_from_screening,
    retest_rows,
    sort_as_text,
    ug,
)
from tracescreen.statistics.series import site_samples


def modified_z_score(x: np.ndarray, history: np.ndarray) -> np.ndarray:
    """Modified z-score of each ``x[i]`` against the row ``history[i, :]``.

    ``M = 0.6745 (x − median) / MAD`` with MAD the median absolute deviation from the median.
    When the MAD is zero (more than half the history identical), the mean absolute deviation
    scaled by 1.253314 is used instead (``M = (x − median) / (1.253314 MeanAD)``, common practice);
    when that is zero too the score is NaN (no spread to compare with).

    Parameters
    ----------
    x : numpy.ndarray, shape (k,)
    history : numpy.ndarray, shape (k, n)

    Returns
    -------
    numpy.ndarray, shape (k,)

    References
    ----------
    [IglewiczHoaglin1993]_ (docs/references.md)
    """
    med = np.median(history, axis=1)
    dev = np.abs(history - med[:, None])
    mad = np.median(dev, axis=1)
    mean_ad = dev.mean(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.where(mad > 0, 0.6745 * (x - med) / mad, (x - med) / (1.253314 * mean_ad))
    return np.where((mad > 0) | (mean_ad > 0), z, np.nan)


def _middle_deviations(h: np.ndarray, med: np.ndarray, scratch: np.ndarray) -> np.ndarray:
    """The median absolute deviation of each sorted row of ``h`` from its median ``med``.

    The ``w`` values nearest a row's median are ``w`` neighbours in the sorted row, and of any ``w``
    neighbours the farthest from the median is one of the two ends (deviations fall towards the median
    and rise after it); so the ``w``-th smallest deviation is the least, over windows of ``w``
    neighbours, of the larger end deviation, ``min_s max(med - h[s], h[s + w - 1] - med)``: a few
    whole-row operations, no search. Each deviation is the subtraction a sort of all deviations would
    compare (``med - h`` left of the median, ``h - med`` right of it). For an even row length the
    MAD is the mean of the two middle deviations (windows of ``n/2`` and ``n/2 + 1``, which share
    their left ends). ``scratch``: at least ``2 x rows x (n // 2 + 1)`` floats.
    """
    k, n = h.shape
    w = n // 2 if n % 2 == 0 else n // 2 + 1  # the (first) middle deviation is the w-th smallest
    m = n - w + 1  # windows of w neighbours per row
    left = np.subtract(med[:, None], h[:, :m], out=scratch[0, :k, :m])
    right = np.subtract(h[:, w - 1:], med[:, None], out=scratch[1, :k, :m])
    if n % 2:  # one middle value: the MAD is that deviation ((d + d) / 2 == d)
        return np.maximum(left, right, out=right).min(axis=1)
    wider = np.maximum(left[:, :-1], right[:, 1:]).min(axis=1)  # windows of w + 1
    return (np.maximum(left, right, out=right).min(axis=1) + wider) / 2.0


def _kth_deviation(row: np.ndarray, med: float, n_left: int, n: int, k: int) -> float:
    """k-th smallest (0-based) |row[:n] - med| of one sorted row (``n_left`` values below ``med``): the deviations
    left of the median, read downwards, and those right of it, read upwards, are two ascending runs; a
    binary search on how many of the smallest ``k + 1`` come from the left run finds it in log2(n) steps."""
    n_right = n - n_left
    lo, hi = max(0, k + 1 - n_right), min(k + 1, n_left)
    while lo < hi:
        mid = (lo + hi) // 2
        if med - row[n_left - 1 - mid] < row[n_left + k - mid] - med:
            lo = mid + 1
        else:
            hi = mid
    nb = k + 1 - lo
    from_a = med - row[n_left - lo] if lo > 0 else -np.inf
    from_b = row[n_left + nb - 1] - med if nb > 0 else -np.inf
    return float(max(from_a, from_b))


def _row_score(row: np.ndarray, i: int, x: float) -> tuple[float, float]:
    """Modified z-score of ``x`` against the first ``i`` values of one sorted history row, and their median."""
    med = (row[(i - 1) // 2] + row[i // 2]) / 2.0
    n_left = int(np.searchsorted(row[:i], med, "left"))
    mad = (_kth_deviation(row, med, n_left, i, (i - 1) // 2) + _kth_deviation(row, med, n_left, i, i // 2)) / 2.0
    if mad > 0:
        return 0.6745 * (x - med) / mad, float(med)
    return float(modified_z_score(np.array([x]), row[None, :i])[0]), float(med)


def expanding_modified_z(x: np.ndarray, pos: np.ndarray, min_prior: int) -> tuple[np.ndarray, np.ndarray]:
    """:func:`modified_z_score` of each value against all earlier values of its series, and their median.

    ``x`` holds series one after another in time order; ``pos[r]`` is row r's place in its series
    (0 for the first). Rows with fewer than ``min_prior`` earlier values get NaN.

    Each series' history is kept sorted as it grows (one insertion per step, vectorised over
    series), so the median is read off the middle and the median absolute deviation is the
    middle of two sorted runs of deviations (left and right of the median), found by binary
    search: the same numbers as sorting every history, without the sorts.
    """
    n = len(x)
    z = np.full(n, np.nan)
    med_out = np.full(n, np.nan)
    if n == 0:
        return z, med_out
    firsts = np.flatnonzero(pos == 0)
    length = np.diff(np.append(firsts, n))
    by_length = np.argsort(-length, kind="stable")  # longest first: the live series are a prefix
    firsts, length = firsts[by_length], length[by_length]
    start = 0
    while start < len(firsts):  # groups of series whose sorted histories fit HISTORY_CELLS
        stop = start + max(1, HISTORY_CELLS // int(length[start]))
        _expanding_group(x, firsts[start:stop], length[start:stop], min_prior, z, med_out)
        start = stop
    return z, med_out


#: Cells (float64) of the sorted histories held at once by :func:`expanding_modified_z` (32 MiB): the
#: series are taken in groups of that size, longest first, so one very long series among many short
#: ones does not make a series-by-length array of them all.
HISTORY_CELLS = 1 << 22


def _expanding_group(x, firsts, length, min_prior, z, med_out) -> None:
    """:func:`expanding_modified_z` of the series starting at ``firsts`` (lengths ``length``, longest
    first), written into ``z`` and ``med_out``."""
    hist = np.full((len(firsts), int(length[0])), np.inf)  # each series' sorted history, +inf after
    spare = hist.copy()  # the next step's histories are written here, then the two swap
    scratch = np.empty((2, len(firsts), int(length[0]) // 2 + 1))  # for the MAD's windows
    for i in range(hist.shape[1]):  # step i: the value at place i of every series long enough
        k = int(np.count_nonzero(length > i))
        rows = firsts[:k] + i
        h = hist[:k, :i]  # a view
        xr = x[rows]
        if i >= min_prior and k <= 4:  # the last few long series: each row by binary searches on plain numbers
            for r in range(k):
                z[rows[r]], med_out[rows[r]] = _row_score(hist[r], i, float(xr[r]))
        elif i >= min_prior:
            med = (h[:, (i - 1) // 2] + h[:, i // 2]) / 2.0
            mad = _middle_deviations(h, med, scratch)
            with np.errstate(divide="ignore", invalid="ignore"):
                zr = 0.6745 * (xr - med) / mad
            flat = ~(mad > 0)
            if flat.any():  # MAD zero: the scaled mean absolute deviation (see modified_z_score)
                zr[flat] = modified_z_score(xr[flat], h[flat])
            z[rows], med_out[rows] = zr, med
        # insert this step's value into its series' sorted history
        if k <= 4:  # the last few long series: a binary search and a shift of each row (O(i) copy, no index arrays)
            for r in range(k):
                at = int(np.searchsorted(hist[r, :i], xr[r], "left"))
                hist[r, at + 1:i + 1] = hist[r, at:i]
                hist[r, at] = xr[r]
            continue
        # sorted h (h[-1] = -inf, h[i] = +inf) with x inserted is max(h[j - 1], min(h[j], x)) at every place j:
        # h[j] left of x's place, x at it, h[j - 1] right of it (values only selected, never computed)
        new = np.minimum(hist[:k, :i + 1], xr[:, None], out=spare[:k, :i + 1])
        np.maximum(new[:, 1:], h, out=new[:, 1:])
        hist, spare = spare, hist


def history_outlier(results: pd.DataFrame, z_threshold: float = 3.5,
                    min_prior: int = 8) -> pd.DataFrame:
    """Detected results far outside their own series' earlier detected values.

    For each detected site-sample result, the modified z-score of its natural log against the logs
    of all earlier detects of the same site, analyte and fraction (sorted by ``sampled_at``, then
    ``sample_id``); flagged when ``|M| > z_threshold`` and there are at least ``min_prior`` earlier
    detects. Non-detects take no part (neither flagged nor in the history).

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results (or the screening table; repeated limit rows are dropped).
    z_threshold : float
        Default 3.5 (Iglewicz & Hoaglin 1993).
    min_prior : int
        Minimum number of earlier detects, default 8.

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``history_outlier``.

    References
    ----------
    [IglewiczHoaglin1993]_ (docs/references.md)
    """
    res = site_samples(results_from_screening(results))
    keep = (res["detected"].astype(bool) & (res["value_ug_L"] > 0)).to_numpy()
    used = SERIES_KEY + ["sampled_at", "sample_id", "value_ug_L"] + [c for c in ("lab", "batch") if c in res.columns]
    det = sort_as_text(res.loc[keep, used], SERIES_KEY + ["sampled_at", "sample_id"]).reset_index(drop=True)
    if len(det) <= min_prior:
        return empty_retest()
    x = np.log(det["value_ug_L"].to_numpy(dtype=float))
    pos = det.groupby(SERIES_KEY, sort=False).cumcount().to_numpy()
    z, med = expanding_modified_z(x, pos, max(min_prior, 1))
    flag = np.abs(z) > z_threshold
    out = flagged_text(det[flag].assign(_z=z[flag], _med=np.exp(med[flag]), _n=pos[flag]))
    if out.empty:
        return empty_retest()
    direction = np.where(out["_z"] > 0, "above", "below")
    detail = (ug(out["value_ug_L"]) + " is far " + direction + " this series' history: modified "
              "z-score of ln(value) " + format_number(out["_z"], 3) + " (threshold "
              + format_number([z_threshold])[0] + ") against " + out["_n"].astype(str)
              + " earlier detects with median " + ug(out["_med"]))
    return retest_rows(out, "history_outlier", detail)
