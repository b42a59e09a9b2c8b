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


def _middle_deviation(h, rix, med, n_left, i, order):
    """The ``order``-th smallest (0-based) ``|h - med|`` of rows of sorted histories, vectorised.

    ``h`` holds sorted rows of ``i`` values, ``rix`` the rows to search (a row may be listed twice, for
    the two middle orders of an even history), ``med`` their medians, ``n_left`` how many values of each
    are below its median. The deviations left of the median, read downwards, and those right of it,
    read upwards, are two ascending runs; a binary search on how many of the smallest ``order + 1``
    come from the left run finds the answer, in about log2(i) steps for all rows at once.
    """
    n_right = i - n_left
    lo = np.maximum(0, order + 1 - n_right)
    hi = np.minimum(order + 1, n_left)
    last = i - 1
    # (np.minimum / np.maximum rather than np.clip: called a few times per step, np.clip's overhead
    # was most of the check's time)
    while True:
        live = lo < hi
        if not live.any():
            break
        mid = (lo + hi) >> 1
        # while lo < hi, mid < n_left and 0 <= order - mid < n_right; elsewhere the indices are only clipped
        left = med - h[rix, np.minimum(np.maximum(n_left - 1 - mid, 0), last)]
        right = h[rix, np.minimum(np.maximum(n_left + order - mid, 0), last)] - med
        more = live & (left < right)
        lo = np.where(more, mid + 1, lo)
        hi = np.where(live & ~more, mid, hi)
    from_right = order + 1 - lo
    from_a = np.where(lo > 0, med - h[rix, np.minimum(np.maximum(n_left - lo, 0), last)], -np.inf)
    from_b = np.where(from_right > 0, h[rix, np.minimum(np.maximum(n_left + from_right - 1, 0), last)] - med, -np.inf)
    return np.maximum(from_a, from_b)


def _kth_deviation(row: np.ndarray, med: float, n_left: int, n: int, k: int) -> float:
    """k-th smallest (0-based) |row[:n] - med| of one sorted row: :func:`_middle_deviation` on plain numbers."""
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
            n_left = np.count_nonzero(h < med[:, None], axis=1)  # below the median: deviations med - h
            if i % 2:  # one middle value: the MAD is that deviation ((d + d) / 2 == d)
                mad = _middle_deviation(h, np.arange(k), med, n_left, i, np.full(k, i // 2))
            else:  # the mean of the two middle deviations, both found in one search
                two = _middle_deviation(h, np.tile(np.arange(k), 2), np.tile(med, 2), np.tile(n_left, 2), i,
                                        np.repeat([i // 2 - 1, i // 2], k))
                mad = (two[:k] + two[k:]) / 2.0
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
        p = np.count_nonzero(h < xr[:, None], axis=1)  # where the value goes in each row
        block = hist[:k, :i + 1]
        shifted = np.empty_like(block)
        shifted[:, 1:] = block[:, :-1]
        np.copyto(block, shifted, where=np.arange(i + 1) > p[:, None])  # right of p: one place right
        block[np.arange(k), p] = xr


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
