"""MCL compliance basis by sampling frequency (40 CFR 141.23(i)).

Where a sampling point is monitored more than once a year, compliance with an inorganic MCL is
decided on the running annual average of its results; where it is monitored once a year or less,
on each single result (with a confirmation sample averaged in where the State requires one) [CFR40-141]_.
An entry says so with ``basis: running_annual_mean`` and ``infrequent_basis: single_sample``.

Screening cannot see the monitoring schedule, only the sampling dates. A series (limit table,
site, analyte, fraction) is taken as sampled once a year or less when the median interval between
its distinct sampling days is at least :data:`ANNUAL_INTERVAL_DAYS` (or it has one sampling day):
its rows are then compared result by result (``basis`` becomes ``single_sample``, with a note).

References
----------
[CFR40-141]_ (docs/references.md): 141.23(i)(1)-(2), compliance with the MCLs for inorganic contaminants.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.coded import joint_codes
from tracescreen._internal.frames import replace_at

#: Median interval between sampling days [days] from which a series counts as sampled yearly or less
#: (about ten months: annual sampling drifts by weeks from year to year; common practice, our choice).
ANNUAL_INTERVAL_DAYS = 300
NOTE = ("sampled once a year or less: each result decides, not the running annual mean "
        "(40 CFR 141.23(i)(2); a confirmation sample may be averaged in where the State requires)")


def _codes(col: pd.Series, rows: np.ndarray) -> np.ndarray:
    """Integer code per selected row (categorical codes where the column is categorical)."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        return col.cat.codes.to_numpy()[rows].astype(np.int64) + 1
    return pd.factorize(col.to_numpy()[rows])[0].astype(np.int64) + 1


def _is_in(col: pd.Series, values) -> np.ndarray:
    """``col.isin(values)`` as a bool array; a categorical's categories are tested, not its rows."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        codes = col.cat.codes.to_numpy()
        return np.append(np.asarray(col.cat.categories.isin(values), dtype=bool), False)[codes]  # -1: missing
    return col.isin(values).to_numpy()


def _text_at(col: pd.Series, rows: np.ndarray) -> np.ndarray:
    """The text of ``col`` at ``rows`` (object array); a categorical's text from its categories."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        codes = col.cat.codes.to_numpy()[rows]
        if (codes >= 0).all():
            return np.asarray(col.cat.categories.astype(str), dtype=object)[codes]
    return col.astype(str).to_numpy(dtype=object)[rows]


def infrequent_series(screened: pd.DataFrame, rows: np.ndarray) -> np.ndarray:
    """For screening rows ``rows``: True where the row's series is sampled once a year or less
    (median interval between its distinct sampling days; a series of one day counts as infrequent)."""
    code, _ = joint_codes(*(_codes(screened[c], rows) for c in ("limit_table", "site_id", "analyte", "fraction")))
    day = pd.to_datetime(screened["sampled_at"].to_numpy()[rows]).normalize().to_numpy()
    n_series = int(code.max()) + 1 if len(code) else 0
    if np.isnat(day).any():  # a missing date: by pandas (NaT days sort last and give no interval)
        return _infrequent_by_frame(code, day)
    d = day.astype("datetime64[D]").astype(np.int64)
    d -= d.min() if len(d) else 0
    span = int(d.max()) + 1 if len(d) else 1
    if n_series * span <= 1 << 24:  # distinct (series, day), by series then day: a table of them, not a sort
        seen = np.zeros(n_series * span, dtype=bool)
        seen[code * span + d] = True
        pairs = np.flatnonzero(seen)
    else:
        pairs = np.unique(code * span + d)
    series, days = np.divmod(pairs, span)
    same = series[1:] == series[:-1]
    gap, of = (days[1:] - days[:-1])[same], series[1:][same]
    gap = np.sort(of * span + gap) % span  # each series' intervals in order (series stay in order; gap < span)
    count = np.bincount(of, minlength=n_series)
    first = np.cumsum(count) - count
    has = count > 0
    median = np.full(n_series, np.nan)
    median[has] = (gap[(first + (count - 1) // 2)[has]] + gap[(first + count // 2)[has]]) / 2
    return (~has | (median >= ANNUAL_INTERVAL_DAYS))[code]


def _infrequent_by_frame(code: np.ndarray, day: np.ndarray) -> np.ndarray:
    frame = pd.DataFrame({"g": code, "d": day}).drop_duplicates().sort_values(["g", "d"])
    gaps = frame.groupby("g")["d"].diff().dt.days
    median_gap = gaps.groupby(frame["g"]).median()  # NaN for a series of one sampling day
    infrequent = median_gap.isna() | (median_gap >= ANNUAL_INTERVAL_DAYS)
    return infrequent.reindex(np.arange(code.max() + 1 if len(code) else 0)).fillna(True).to_numpy(dtype=bool)[code]


def apply_sampling_frequency(screened: pd.DataFrame, limits) -> pd.DataFrame:
    """Rows of ``infrequent_basis: single_sample`` entries whose series is sampled yearly or less
    become single-sample comparisons (their status is the result's own, computed by screening)."""
    ents = limits.entries
    if "infrequent_basis" not in ents or not ents["infrequent_basis"].notna().any():
        return screened
    flagged = ents.loc[ents["infrequent_basis"] == "single_sample", "entry_id"].astype(str)
    rows = np.flatnonzero(_is_in(screened["entry_id"], flagged) & _is_in(screened["basis"], ["running_annual_mean"]))
    if not len(rows):
        return screened
    rows = rows[infrequent_series(screened, rows)]
    if not len(rows):
        return screened
    note = _text_at(screened["note"], rows)
    note = np.where(note == "", NOTE, note + "; " + NOTE)
    return screened.assign(basis=replace_at(screened["basis"], rows, np.full(len(rows), "single_sample", dtype=object)),
                           note=replace_at(screened["note"], rows, note))
