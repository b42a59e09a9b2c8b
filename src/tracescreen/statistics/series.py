"""Results as series, and many series at once.

A *series* is the results of one site, analyte and fraction (:data:`KEYS`) from site samples (QC
samples are left out: :func:`site_samples`). For statistics a censored series is ``value`` (the
detected value, or the detection limit of a non-detect) with ``nondetect`` (:func:`censored_series`);
times are decimal years (:func:`decimal_years`).

The statistics modules compute every series in one numpy pass over a padded array of shape
``(groups, longest series)`` (:func:`chunks`). Series of very different lengths would waste memory
in a single array, so groups are put in *buckets* of similar length (a geometric ladder of widths)
and each bucket is split into chunks that respect a cell budget. The loop runs over buckets and
chunks (a handful), never over series.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Iterator

import numpy as np
import pandas as pd

from tracescreen._internal.sorting import group_sort

#: A monitoring series: one site, one analyte, one fraction.
KEYS = ["site_id", "analyte", "fraction"]

#: Days per year used to turn dates into decimal years (Julian year).
DAYS_PER_YEAR = 365.25

_EPOCH = np.datetime64("1970-01-01T00:00:00", "ns")

#: Percentiles reported for a series (as probabilities).
PROBS = (0.5, 0.9, 0.95)


def as_series(values, nondetect):
    """A censored series as two arrays (``values`` float [µg/L], ``nondetect`` bool), checked.

    ``nondetect`` None means every value is detected. Raises ValueError on unequal lengths or a NaN
    (a non-detect needs its detection limit).
    """
    x = np.asarray(values, dtype=float)
    nd = np.zeros(x.shape, bool) if nondetect is None else np.asarray(nondetect, dtype=bool)
    if x.shape != nd.shape:
        raise ValueError("values and nondetect must have the same length")
    if np.isnan(x).any():
        raise ValueError("values contain NaN (a non-detect needs its detection limit)")
    return x, nd


def site_samples(frame: pd.DataFrame) -> pd.DataFrame:
    """Rows of site samples: QC samples (field duplicates, blanks) are left out.

    A row without a ``sample_type`` (or a frame without the column) counts as a site sample; the
    frame itself is returned when every row is one (no copy).
    """
    if "sample_type" not in frame.columns:
        return frame
    kind = frame["sample_type"]
    mask = kind.eq("sample") | kind.isna()
    return frame if mask.all() else frame[mask.to_numpy()]


def censored_value(frame: pd.DataFrame, suffix: str = "") -> pd.Series:
    """The detected value, or the detection limit of a non-detect [µg/L] (columns may carry ``suffix``)."""
    det = frame["detected" + suffix].astype(bool)
    return frame["value_ug_L" + suffix].where(det, frame["detection_limit_ug_L" + suffix])


def censored_series(results: pd.DataFrame) -> pd.DataFrame:
    """Add ``value`` (:func:`censored_value`) and ``nondetect`` columns: the censored-series convention."""
    nondetect = ~results["detected"].astype(bool).to_numpy()
    return results.assign(value=censored_value(results).to_numpy(dtype=float), nondetect=nondetect)


def decimal_years(dates) -> np.ndarray:
    """Dates -> years since 1970-01-01 plus 1970 (Julian years of 365.25 days)."""
    d = pd.to_datetime(pd.Series(dates)).to_numpy(dtype="datetime64[ns]")
    return 1970.0 + (d - _EPOCH) / np.timedelta64(1, "D") / DAYS_PER_YEAR


def date_from_decimal_year(t) -> pd.Series:
    """Inverse of :func:`decimal_years` (NaN -> NaT); day precision."""
    t = np.asarray(t, dtype=float)
    ok = np.isfinite(t) & (t > 1678.0) & (t < 2261.0)  # the datetime64[ns] range
    days = np.where(ok, (t - 1970.0) * DAYS_PER_YEAR, 0.0)
    out = _EPOCH + np.round(days).astype("int64").astype("timedelta64[D]")
    return pd.Series(np.where(ok, out, np.datetime64("NaT")), dtype="datetime64[ns]")


#: Default number of cells (groups x width, or groups x width^2 for pairwise kernels) per chunk.
CELL_BUDGET = 4_000_000


@dataclass(frozen=True)
class Chunk:
    """One padded block of groups.

    Attributes
    ----------
    groups : ndarray of int, shape (g,)
        Group codes in this chunk.
    rows : ndarray of int, shape (g, m)
        Positions into the caller's flat arrays, in the order requested (e.g. by time);
        0 where ``valid`` is False (use :meth:`take` to read through it).
    valid : ndarray of bool, shape (g, m)
        True for real observations. Without blocks a group's observations fill its first ``n``
        columns; with blocks (:func:`chunks` ``blocks``) block b fills the first cells of columns
        ``b * block_width .. (b + 1) * block_width - 1``.
    blocks : int
        Blocks per row (1 without blocks); ``m = blocks * block_width``.
    block_width : int
        Cells per block.
    """

    groups: np.ndarray
    rows: np.ndarray
    valid: np.ndarray
    blocks: int = 1
    block_width: int = 0

    def take(self, values: np.ndarray, fill) -> np.ndarray:
        """Read ``values`` (flat, one per input row) into the padded layout, ``fill`` as padding."""
        out = np.asarray(values)[self.rows]
        return np.where(self.valid, out, fill)

    def pairs(self) -> tuple[np.ndarray, np.ndarray]:
        """Column pairs (i, j), i < j, of cells in the same block: ``i`` earlier when rows are in time order."""
        i, j = np.triu_indices(self.block_width, 1)
        offset = (np.arange(self.blocks) * self.block_width)[:, None]
        return (offset + i).ravel(), (offset + j).ravel()


def _width_ladder(size: np.ndarray) -> np.ndarray:
    """Round sizes up to a geometric ladder (ratio about 1.25) so a bucket wastes < 25 % padding."""
    size = np.maximum(size, 1).astype(float)
    step = np.ceil(np.log(size) / np.log(1.25))
    width = np.ceil(1.25**step).astype(np.int64)
    return np.maximum(width, size.astype(np.int64))


def chunks(
    codes: np.ndarray,
    n_groups: int,
    order: np.ndarray | None = None,
    cells: Callable[[int], int] = lambda m: m,
    budget: int = CELL_BUDGET,
    blocks: np.ndarray | None = None,
) -> Iterator[Chunk]:
    """Yield padded chunks that together cover every group with at least one row.

    Parameters
    ----------
    codes : ndarray of int
        Group code of each row (0 .. n_groups - 1).
    n_groups : int
        Number of groups.
    order : ndarray, optional
        Secondary sort key within a group (e.g. sampling time); rows keep input order otherwise.
    cells : callable
        Cells one group (or one block) of width ``m`` costs in the kernel (``m`` for per-value
        kernels, ``m * m`` for pairwise ones).
    budget : int
        Cells per chunk.
    blocks : ndarray of int, optional
        Block of each row within its group (0, 1, ..., e.g. the season). A group with blocks
        0 .. P - 1 gets a row of P blocks of equal width (its largest block, on the ladder) and costs
        ``P * cells(width)``: a pairwise kernel over blocks compares only rows of one block
        (:meth:`Chunk.pairs`). Chunks hold groups with the same P and width.
    """
    codes = np.asarray(codes, dtype=np.int64)
    if codes.size == 0:
        return
    block = np.zeros(codes.size, np.int64) if blocks is None else np.asarray(blocks, dtype=np.int64)
    n_blocks = int(block.max()) + 1
    if order is not None:  # by group, block, then order (np.lexsort's order, by one integer sort)
        sort = group_sort(codes * n_blocks + block, np.asarray(order))
    else:
        sort = np.lexsort((block, codes)) if blocks is not None else np.argsort(codes, kind="stable")
    sub = codes[sort] * n_blocks + block[sort]  # sorted by group, then block
    size = np.bincount(sub, minlength=n_groups * n_blocks)
    start = np.concatenate(([0], np.cumsum(size)[:-1]))
    position = np.arange(sort.size) - start[sub]
    per_block = size.reshape(n_groups, n_blocks)
    used = per_block > 0
    present = np.flatnonzero(used.any(axis=1))
    span = np.where(used.any(axis=1), n_blocks - np.argmax(used[:, ::-1], axis=1), 0)  # blocks per group
    width = _width_ladder(per_block.max(axis=1))
    bucket = span * (int(width.max()) + 1) + width  # without blocks: by width, as before
    sorted_codes = codes[sort]
    cell = block[sort] * width[sorted_codes] + position
    for key in np.unique(bucket[present]):
        members = present[bucket[present] == key]
        p, w = int(span[members[0]]), int(width[members[0]])
        per_chunk = max(1, budget // max(1, p * cells(w)))
        for first in range(0, members.size, per_chunk):
            groups = members[first : first + per_chunk]
            slot = np.full(n_groups, -1, dtype=np.int64)
            slot[groups] = np.arange(groups.size)
            pick = slot[sorted_codes] >= 0
            rows = np.zeros((groups.size, p * w), dtype=np.int64)
            valid = np.zeros((groups.size, p * w), dtype=bool)
            r, c = slot[sorted_codes[pick]], cell[pick]
            rows[r, c] = sort[pick]
            valid[r, c] = True
            yield Chunk(groups=groups, rows=rows, valid=valid, blocks=p, block_width=w)


def group_codes(frame: pd.DataFrame, keys: list[str]) -> tuple[np.ndarray, pd.DataFrame]:
    """Integer code per row for the groups of ``keys``, and one row of key values per code.

    Groups are numbered in sorted key order; rows whose key is missing get their own group.
    """
    if frame.empty:
        return np.zeros(0, dtype=np.int64), pd.DataFrame(columns=keys)
    grouped = frame.groupby(keys, sort=True, dropna=False, observed=True)
    codes = grouped.ngroup().to_numpy(dtype=np.int64)
    table = grouped.size().reset_index()[keys]
    return codes, table
