"""Screening a large set of results in parts of whole sites, to bound peak memory.

:func:`tracescreen.screening.screen.screen` holds several working copies of its output while it
runs (the period statuses, the rounding decisions); for a million results that is more than a
gigabyte on top of the result. Everything it computes stays within one site (the applicable limits
follow the site's uses, hardness is per site and sample, a cross-fraction pair is one sample, running
means and percentiles are per site, metal, fraction and limit), so screening groups of whole sites
one after the other gives the same rows, with only one group's working copies alive at a time. The
parts are joined category-wise (text stays categorical) and put back in input order.

``period_id`` is a run's own number linking a screening row to its row of the periods table: with
several parts each part's ids follow the previous part's.
"""

from __future__ import annotations

from typing import Iterator

import numpy as np
import pandas as pd
from pandas.api.types import union_categoricals

from tracescreen._internal.frames import used_only
from tracescreen._internal.memory import release_unused
from tracescreen.progress import report
from tracescreen.screening.screen import screen, screen_with_periods

#: results per part (a part always holds whole sites, so it may be larger)
PART_ROWS = 250_000
#: results per part when every table streams to its file (``tracescreen screen``): the peak memory of
#: such a run is the loaded results plus one part's tables (about 4 kB per result at the part's peak,
#: bench/bench_scale.py), so smaller parts keep 1,000,000 results under 1.5 GB; the work per part
#: is per result or per series, so the time hardly changes
STREAM_PART_ROWS = 125_000


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


def site_partitions(results: pd.DataFrame, part_rows: int = PART_ROWS) -> Iterator[tuple[np.ndarray, pd.DataFrame]]:
    """Groups of whole sites of about ``part_rows`` results: ``(positions, part)`` one after the other.

    ``positions`` are the part's rows' positions in ``results`` (ascending: each part keeps the input
    order); sites are taken in sorted order. One part (``results`` itself) when it is small enough.
    A part's text columns hold only the categories its rows use (:func:`used_categories`).
    """
    if len(results) <= part_rows:
        yield np.arange(len(results)), results
        return
    site_codes, _ = pd.factorize(results["site_id"], sort=True)
    order = np.argsort(site_codes, kind="stable")
    for lo, hi in site_parts(site_codes[order], part_rows):
        positions = order[lo:hi]
        yield positions, used_categories(results.iloc[positions].reset_index(drop=True))


def used_categories(frame: pd.DataFrame) -> pd.DataFrame:
    """``frame`` with each categorical column reduced to the categories its rows use (order kept).

    A part taken from a run's results keeps the run's categories: a million sample ids for a part of
    125,000 results, which every step that reads the categories (text keys, formula guards, Parquet
    dictionaries) would otherwise go through again for each part."""
    out = {c: used_only(frame[c]) for c in frame.columns if isinstance(frame[c].dtype, pd.CategoricalDtype)}
    out = {c: col for c, col in out.items() if col is not frame[c]}
    return frame.assign(**out) if out else frame


def screen_part(results: pd.DataFrame, limits, sites, cross_fraction: bool = True, with_periods: bool = False,
                period_base: int = 0, with_results: bool = True):
    """Screening rows (and the periods table) of one group of whole sites, in input order.

    Returns ``(screened, periods, position)``: ``position`` gives each screening row's result as its
    position in ``results``; period ids are numbered from ``period_base + 1``.
    """
    # `row` carries each result's position through screening (it is only copied to the output)
    original_row = results["row"].to_numpy()
    frame = results.assign(row=np.arange(len(results)))
    if with_periods:
        screened, periods = screen_with_periods(frame, limits, sites, cross_fraction=cross_fraction,
                                                with_results=with_results)
    else:
        screened, periods = screen(frame, limits, sites, cross_fraction=cross_fraction), None
    del frame
    position = screened["row"].to_numpy()
    if not (np.diff(position) >= 0).all():
        screened = screened.iloc[np.argsort(position, kind="stable")].reset_index(drop=True)
        position = screened["row"].to_numpy()
    screened["row"] = original_row[position]
    if period_base and "period_id" in screened.columns:
        screened["period_id"] = screened["period_id"] + period_base
        if periods is not None:
            periods["period_id"] = periods["period_id"].to_numpy() + period_base
    return screened, periods, position


def last_period_id(screened: pd.DataFrame, base: int) -> int:
    """The highest period id of a screened part (``base`` when it has none): the next part numbers from it."""
    if "period_id" not in screened.columns:
        return base
    ids = screened["period_id"]
    return max(base, int(ids.max())) if ids.notna().any() else base


def screen_in_parts(results: pd.DataFrame, limits, sites: pd.DataFrame | None = None, *,
                    cross_fraction: bool = True, with_periods: bool = False, with_results: bool = True,
                    part_rows: int = PART_ROWS) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    """Screening of ``results`` (and the periods table when ``with_periods``), in parts of whole sites.

    Parameters
    ----------
    results : DataFrame
        Accepted results (any order).
    limits, sites
        As for :func:`tracescreen.screening.screen.screen`.
    cross_fraction : bool
        Decide across fractions where certain (see :mod:`tracescreen.screening.fractions`).
    with_periods : bool
        Also return the periods table (``periods.csv``), from the same evaluation of the period rules.
    with_results : bool
        List, per period value, the results that formed it.
    part_rows : int
        About how many results per part; up to this many are screened in one go.

    Returns
    -------
    (screened, periods)
        The screening rows in input order, exactly as one call of ``screen`` gives them (categories
        of text columns aside); ``periods`` is None unless ``with_periods``.
    """
    screened_parts, period_parts, positions, base, done = [], [], [], 0, 0
    for where, part in site_partitions(results, part_rows):
        screened, table, position = screen_part(part, limits, sites, cross_fraction, with_periods, base, with_results)
        positions.append(where[position])
        done += len(where)
        report("screen", done, len(results), unit="rows")
        base = max(last_period_id(screened, base), int(table["period_id"].max()) if table is not None and len(table) else 0)
        screened_parts.append(screened)
        if table is not None and (len(table) or not period_parts):
            period_parts.append(table)  # parts without period values add nothing (and no object dtypes)
        release_unused()
    if len(screened_parts) == 1:
        return screened_parts[0], period_parts[0] if with_periods else None
    screened = join_frames(screened_parts, consume=True)
    position = np.concatenate(positions)
    if not (np.diff(position) >= 0).all():
        screened = screened.iloc[np.argsort(position, kind="stable")].reset_index(drop=True)
    period_parts = [t for t in period_parts if len(t)] or period_parts[:1]
    periods = join_frames(period_parts, consume=True) if with_periods else None
    return screened, periods


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
