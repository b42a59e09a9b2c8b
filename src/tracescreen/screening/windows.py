"""Time windows of the period rules: the monitoring period of a date, 12-month running windows, window sums.

A running annual mean's window ending on a sample day d holds the days in (d - 12 months, d]
([CFR40-141]_ 141.23(i)); a monitoring period is a calendar year, half-year, quarter or month.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

#: length of a running window [months]
WINDOW_MONTHS = 12


def period_bounds(sampled_at: pd.Series, period: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Label, first day and last day of the monitoring period of each date (vectorised; each distinct
    month is worked out once)."""
    t = pd.DatetimeIndex(sampled_at)
    if t.hasnans or len(t) < 2:
        return _period_bounds(t, period)
    month = t.to_numpy().astype("datetime64[M]").astype(np.int64)  # months since 1970: a period holds whole months
    low = int(month.min())
    present = np.bincount(month - low) > 0  # each distinct month (a table of the months spanned, not a sort)
    inverse = (np.cumsum(present) - 1)[month - low]
    label, start, end = _period_bounds(pd.DatetimeIndex((np.flatnonzero(present) + low).astype("datetime64[M]")
                                                        .astype("datetime64[ns]")), period)
    return label[inverse], start[inverse], end[inverse]


def _period_bounds(t: pd.DatetimeIndex, period: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    year = t.year.to_numpy()
    ytxt = pd.Index(year.astype(str))
    if period == "calendar_year":
        first_month, months, label = np.ones_like(year), 12, ytxt
    elif period == "half_year":
        half = (t.month.to_numpy() - 1) // 6
        first_month, months, label = half * 6 + 1, 6, ytxt + "-H" + pd.Index((half + 1).astype(str))
    elif period == "quarter":
        qtr = (t.month.to_numpy() - 1) // 3
        first_month, months, label = qtr * 3 + 1, 3, ytxt + "-Q" + pd.Index((qtr + 1).astype(str))
    elif period == "month":
        first_month, months, label = t.month.to_numpy(), 1, pd.Index(t.strftime("%Y-%m"))
    else:
        raise ValueError(f"unknown period {period!r}")
    start = pd.to_datetime(pd.DataFrame({"year": year, "month": first_month, "day": 1}))
    end = start + pd.DateOffset(months=months) - pd.Timedelta(days=1)
    return label.to_numpy(dtype=object), start.to_numpy(), end.to_numpy()


def running_windows(series_code: np.ndarray, sampled_at, months: int = WINDOW_MONTHS):
    """Window [start, stop) of each row: same series, day in (day - months, day]. Rows sorted by (series, date)."""
    t = pd.DatetimeIndex(sampled_at)
    day = t.to_numpy(dtype="datetime64[D]").astype(np.int64)
    times, at = np.unique(t.to_numpy(), return_inverse=True)  # each distinct time offset once
    first = (pd.DatetimeIndex(times) - pd.DateOffset(months=months)).to_numpy(dtype="datetime64[D]").astype(np.int64)
    first = first[at.ravel()]
    base = day.min() if day.size else 0
    span = (day.max() - base if day.size else 0) + 800
    code = np.asarray(series_code, dtype=np.int64) * span
    key = code + (day - base + 400)
    stop = np.searchsorted(key, key, side="right")
    start = np.searchsorted(key, code + (first - base + 400), side="right")
    return start, stop


def series_first_row(series: np.ndarray) -> np.ndarray:
    """Position of the first row of each row's series (rows sorted by ``series``)."""
    idx = np.arange(len(series))
    return np.maximum.accumulate(np.where(np.r_[True, series[1:] != series[:-1]], idx, 0)) if len(series) else idx


def window_sums(x: np.ndarray, start: np.ndarray, stop: np.ndarray, series: np.ndarray) -> np.ndarray:
    """Sum of ``x[start:stop]`` for each row's window; rows sorted by ``series``, each window inside its series.

    Running sums restart at each series, so a series' sums never depend on another series' values
    (not even in the last binary digit), and a NaN makes only the windows that hold it NaN.
    """
    x = np.asarray(x, dtype=float)
    nan = np.isnan(x)
    by_series = pd.Series(np.where(nan, 0.0, x)).groupby(series, sort=False)
    local = by_series.cumsum().to_numpy()
    n_nan = pd.Series(nan.astype(np.int64)).groupby(series, sort=False).cumsum().to_numpy()
    first = series_first_row(series)
    inside = start > first  # the window starts after its series' first row

    def before(a):  # running value just before each window's start (0 at a series' start)
        return np.where(inside, a[np.maximum(start - 1, 0)], 0)

    sums = local[stop - 1] - before(local)
    return np.where(n_nan[stop - 1] - before(n_nan) > 0, np.nan, sums)
