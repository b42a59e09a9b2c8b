"""Screening a large session in parts of whole sites, to bound the dashboard's peak memory.

The engine's :func:`tracescreen.screening.screen.screen` holds several working copies of its output while
it runs (the period statuses, the rounding decisions); for a million results that is more than a
gigabyte on top of the result. Everything it computes stays within one site (the applicable limits
follow the site's uses, hardness is per site and sample, running means and percentiles are per
site, metal, fraction and limit), so screening groups of whole sites one after the other gives the
same rows, with only one group's working copies alive at a time. Each part's text columns are
turned into categoricals at once and the parts are joined category-wise.
"""

from __future__ import annotations

from typing import Callable

import numpy as np
import pandas as pd
from pandas.api.types import union_categoricals

#: results per part (a part always holds whole sites, so it may be larger)
PART_ROWS = 250_000


def site_parts(site_codes: np.ndarray, part_rows: int = PART_ROWS) -> list[tuple[int, int]]:
    """``(start, stop)`` row ranges of about ``part_rows`` rows that never split a site.

    ``site_codes`` must be sorted (rows of a site contiguous).
    """
    n = len(site_codes)
    if n <= part_rows:
        return [(0, n)]
    starts = np.flatnonzero(np.r_[True, site_codes[1:] != site_codes[:-1]])  # first row of each site
    bounds = [0]
    while bounds[-1] < n:
        want = bounds[-1] + part_rows
        nxt = starts[np.searchsorted(starts, want)] if want < n and want <= starts[-1] else n
        if nxt <= bounds[-1]:  # one site longer than a part: take it whole
            later = starts[starts > bounds[-1]]
            nxt = int(later[0]) if len(later) else n
        bounds.append(int(nxt))
    return list(zip(bounds[:-1], bounds[1:]))


def screen_in_parts(accepted: pd.DataFrame, site_codes: np.ndarray, screen: Callable[[pd.DataFrame], pd.DataFrame],
                    as_categorical: Callable[[pd.Series], pd.Series], part_rows: int = PART_ROWS) -> pd.DataFrame:
    """``screen(accepted)`` computed over parts of whole sites and joined.

    Parameters
    ----------
    accepted : DataFrame
        Accepted results sorted by site (``site_codes``, one code per row).
    screen : callable
        The engine's screening of a frame of results.
    as_categorical : callable
        Turns a text column into the dashboard's categorical form; applied to each part's text
        columns before joining (so no part is held as plain text).
    part_rows : int
        About how many results per part.

    ``period_id`` stays unique across parts (each part's ids are shifted past the previous ones).
    """
    ranges = site_parts(site_codes, part_rows)
    if len(ranges) == 1:
        return screen(accepted)
    parts, offset = [], 0
    for lo, hi in ranges:
        part = screen(accepted.iloc[lo:hi])
        for col in part.columns:
            dtype = part[col].dtype
            if dtype == object or pd.api.types.is_string_dtype(dtype) or isinstance(dtype, pd.CategoricalDtype):
                part[col] = as_categorical(part[col])
        if "period_id" in part.columns and part["period_id"].notna().any():
            ids = part["period_id"]
            part["period_id"] = ids + offset
            offset += int(ids.max())
        parts.append(part)
    return join_frames(parts, consume=True)


def _is_text(values: pd.Series) -> bool:
    dtype = values.dtype
    return dtype == object or pd.api.types.is_string_dtype(dtype) or isinstance(dtype, pd.CategoricalDtype)


def _object_categorical(values: pd.Series) -> pd.Categorical:
    """A text column as a categorical with object-dtype categories (missing stays missing)."""
    if not isinstance(values.dtype, pd.CategoricalDtype):
        values = values.astype("category")
    cats = values.cat.categories
    objects = pd.Index(np.asarray(cats, dtype=object), dtype=object)
    return pd.Categorical.from_codes(values.cat.codes.to_numpy(), dtype=pd.CategoricalDtype(objects), validate=False)


def join_frames(frames: list[pd.DataFrame], consume: bool = False) -> pd.DataFrame:
    """Rows of ``frames`` one after the other, text columns joined category-wise.

    ``pd.concat`` turns categoricals with different categories into plain text, which for a
    million rows costs as much memory as the table itself; here their categories are united and
    only the codes are re-mapped. Columns missing from a frame are missing values there. With
    ``consume``, each frame's column is dropped as soon as it is joined (less memory at once).
    """
    columns = list(dict.fromkeys(c for f in frames for c in f.columns))
    joined = {}
    for col in columns:
        pieces = [f[col].reset_index(drop=True) if col in f.columns
                  else pd.Series(np.full(len(f), np.nan)) for f in frames]
        present = [p for f, p in zip(frames, pieces) if col in f.columns]
        if all(_is_text(p) for p in present):
            cats = [_object_categorical(p) for p in pieces]
            joined[col] = pd.Series(union_categoricals(cats, ignore_order=True)) if len(cats) > 1 else pd.Series(cats[0])
        else:
            joined[col] = pd.concat(pieces, ignore_index=True)
        if consume:
            for f in frames:
                if col in f.columns:
                    del f[col]
    # side by side without consolidating same-dtype columns into 2-D blocks (a copy of them all)
    return pd.concat([v.rename(c) for c, v in joined.items()], axis=1) if joined else pd.DataFrame()
