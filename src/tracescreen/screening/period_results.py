"""The results behind each period value, as text: ``sample_id (YYYY-MM-DD): result_text`` of each
result of a window or period, joined with ``"; "`` (the ``results`` column of ``periods.csv``,
:mod:`tracescreen.screening.periods`).

A running annual mean lists every result of its 12-month window, so a site sampled often lists each
result in many windows: the text is built by Arrow, never a Python string per result or window.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc


def _arrow_text(values) -> pa.Array:
    """A text column of ``rows`` (categorical or object array) as an Arrow string array."""
    arr = pa.array(values, from_pandas=True)
    return arr.cast(pa.string()) if pa.types.is_dictionary(arr.type) or arr.type != pa.string() else arr


def day_texts(dates, prefix: str = "") -> pa.Array:
    """``prefix`` + YYYY-MM-DD of each date as Arrow text: each distinct day formatted once, the rows'
    texts taken from them (a missing date: missing text)."""
    days = np.asarray(dates, dtype="datetime64[ns]").astype("datetime64[D]")
    uniq, inv = np.unique(days, return_inverse=True)
    text = (prefix + pd.DatetimeIndex(uniq.astype("datetime64[ns]")).strftime("%Y-%m-%d")).to_numpy(dtype=object)
    return pa.array(text, type=pa.string(), from_pandas=True).take(pa.array(inv.ravel()))


def describe(rows: dict, end: str = "") -> pa.Array:
    """'sample_id (YYYY-MM-DD): result_text' per row (followed by ``end``), for listing the results
    behind a value (Arrow text); each distinct day is formatted once."""
    return pc.binary_join_element_wise(_arrow_text(rows["sample_id"]), " (", day_texts(rows["sampled_at"]), "): ",
                                       _arrow_text(rows["result_text"]), end, "")


#: Separator of the results listed behind one period value.
JOIN_SEPARATOR = "; "


def joined(rows: dict, start: np.ndarray, stop: np.ndarray):
    """The results rows[start:stop] described and joined with '; ', for each (start, stop): a ``str``
    array built by Arrow.

    Each description is written once, followed by the separator; a window's text is then one
    contiguous stretch of that text, and Arrow string views (16 bytes per window, pointing into it)
    are copied into one string column by Arrow: no list of descriptions per window."""
    start, stop = np.asarray(start, dtype=np.int64), np.asarray(stop, dtype=np.int64)
    d = describe(rows, JOIN_SEPARATOR)
    offsets = np.frombuffer(d.buffers()[1], dtype=np.int32)[d.offset:d.offset + len(d) + 1].astype(np.int64)
    data = d.buffers()[2]
    if d.null_count or offsets[-1] >= 2**31 - 1:  # a missing description, or past a view's 32-bit offsets
        return joined_lists(d, start, stop)
    lo = offsets[start]
    size = np.where(stop > start, offsets[stop] - len(JOIN_SEPARATOR) - lo, 0)  # no separator after the last
    buf = np.frombuffer(data, dtype=np.uint8, count=offsets[-1])
    head = np.zeros((len(start), 12), dtype=np.uint8)  # a view's first 4 (or, up to 12, all) bytes
    at = lo[:, None] + np.arange(12)
    inside = np.arange(12) < size[:, None]
    head[inside] = buf[at[inside]]
    views = np.zeros((len(start), 4), dtype=np.int32)
    views[:, 0] = size
    views[:, 1:] = head.view(np.int32)
    long = size > 12  # longer strings: prefix, buffer 0, offset into it (shorter ones are held in the view)
    views[long, 2] = 0
    views[long, 3] = lo[long]
    arr = pa.Array.from_buffers(pa.string_view(), len(start), [None, pa.py_buffer(views), data])
    return pd.array(pa.chunked_array([arr.cast(pa.large_string())]), dtype="str")


#: Windows joined at a time by :func:`joined_lists` (bounds the memory of the results taken for them).
JOIN_WINDOWS = 1 << 15


def joined_lists(d: pa.Array, start: np.ndarray, stop: np.ndarray):
    """:func:`joined` from descriptions ending in the separator, as lists of each window's descriptions
    (the separator removed again); any text, missing descriptions included."""
    d = pc.utf8_slice_codeunits(d, 0, -len(JOIN_SEPARATOR))
    size = stop - start
    chunks = []
    for lo in range(0, len(size), JOIN_WINDOWS):
        st, sz = start[lo:lo + JOIN_WINDOWS], size[lo:lo + JOIN_WINDOWS]
        idx = np.repeat(st - np.cumsum(sz) + sz, sz) + np.arange(sz.sum())  # each window's rows, in order
        offsets = pa.array(np.concatenate([[0], np.cumsum(sz)]).astype(np.int64), type=pa.int64())
        chunks.append(pc.binary_join(pa.LargeListArray.from_arrays(offsets, d.take(pa.array(idx))), JOIN_SEPARATOR))
    joined = pa.chunked_array(chunks, type=pa.string()) if chunks else pa.chunked_array([], type=pa.string())
    return pd.array(joined.cast(pa.large_string()), dtype="str")
