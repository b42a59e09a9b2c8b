"""Session data of the dashboard: the engine's screening of one dataset key plus precomputed indexes.

:func:`build_session` screens the accepted results with the engine's pipeline (in parts of whole
sites, :func:`tracescreen.pipeline.screen`) and indexes the rows by code arrays so that the views
select with integer comparisons, never with text.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np
import pandas as pd

from dashboard.state.frames import file_counts
from dashboard.state.memo import Memo
from tracescreen.vocabulary import SEVERITY

BASE_KEY = "base"
#: ``SessionData.day`` of a result without a sampling date
NO_DAY = int(np.iinfo(np.int32).min)

#: date columns of the screening output; every text column becomes categorical (a million results
#: repeat a handful of sites, analytes and sources)
_NUMERIC_OR_DATE = ("sampled_at", "analysed_at")


@dataclass
class Inputs:
    """What the engine loaded: accepted and rejected rows, limits, sites (``None`` if not given)."""

    accepted: pd.DataFrame
    rejected: pd.DataFrame
    limits: Any  # tracescreen.limits.load.LimitSet
    sites: pd.DataFrame | None
    files: pd.DataFrame | None = None
    sources: tuple[str, ...] = ()
    options: Any = None  # tracescreen.io.loading.LoadOptions used for the base files
    sites_name: str = "the sites file"
    set_aside: pd.DataFrame | None = None  # rows that are not results to screen (lab QC, other analytes)
    cross_fraction: bool = True  # screening option: decide across fractions where certain
    wells: Any = None  # tracescreen.pipeline.WellsOptions: wells against background, or None


@dataclass
class SessionData:
    """Screened rows of one dataset key with the indexes the callbacks need.

    ``screened`` is sorted so that the rows of one result are contiguous (column ``_rid``) and the
    results of one site, analyte and fraction are contiguous and in date order; ``series_key``
    is therefore non-decreasing and a series is found by binary search.
    """

    key: str
    screened: pd.DataFrame
    rejected: pd.DataFrame
    set_aside: pd.DataFrame
    files: pd.DataFrame
    limits: Any
    sites: pd.DataFrame | None
    sources: tuple[str, ...]
    site_ids: list[str]
    analytes: list[str]
    fractions: list[str]
    tables: list[str]
    uses: list[str]
    campaigns: list[str]
    # per screened row, numpy arrays
    rid: np.ndarray
    rank: np.ndarray
    site_code: np.ndarray
    analyte_code: np.ndarray
    fraction_code: np.ndarray
    table_code: np.ndarray
    use_code: np.ndarray
    campaign_code: np.ndarray
    day: np.ndarray  # sampling date as int32 days since 1970-01-01 (NO_DAY when undated)
    series_key: np.ndarray
    wells_options: Any = None  # tracescreen.pipeline.WellsOptions, or None
    memo: Memo = field(default_factory=Memo, repr=False)
    _derived: dict = field(default_factory=dict, repr=False)
    _derived_lock: threading.Lock = field(default_factory=threading.Lock, repr=False)
    _derived_locks: dict = field(default_factory=dict, repr=False)

    # ---- look-ups -------------------------------------------------------------------------
    def site_name(self, site_id: str) -> str:
        """The site's name from the sites file, else its id."""
        if self.sites is not None and "name" in self.sites.columns:
            hit = self.sites.loc[self.sites["site_id"].astype(str) == str(site_id), "name"]
            if len(hit) and isinstance(hit.iloc[0], str) and hit.iloc[0]:
                return hit.iloc[0]
        return str(site_id)

    def series_bounds(self, site_id: str, analyte: str, fraction: str) -> tuple[int, int]:
        """Positions ``lo:hi`` of the screened rows of one site, analyte and fraction (empty if none)."""
        try:
            s = self.site_ids.index(site_id)
            a = self.analytes.index(analyte)
            f = self.fractions.index(fraction)
        except ValueError:
            return 0, 0
        k = (s * len(self.analytes) + a) * len(self.fractions) + f
        lo, hi = np.searchsorted(self.series_key, [k, k + 1])
        return int(lo), int(hi)

    def series(self, site_id: str, analyte: str, fraction: str) -> pd.DataFrame:
        """Screened rows (all statuses, QC included) of one site, analyte and fraction, by date."""
        lo, hi = self.series_bounds(site_id, analyte, fraction)
        return self.screened.iloc[lo:hi]

    def cached(self, name: str, args: tuple, compute: Callable[[], Any], size: int | None = None) -> Any:
        """Per-session memo of a view keyed by ``(name, args)``: the least recently used values
        go first, at most ``size`` per name (default :data:`dashboard.memo.DEFAULT_ENTRIES`) and
        :data:`dashboard.memo.DEFAULT_BYTES` for the session (:class:`dashboard.memo.Memo`)."""
        return self.memo.get(name, args, compute, entries=size)

    def derived(self, name: str, compute: Callable[[], Any]) -> Any:
        """A value derived once from the whole session (the exceedance rows, the retest list, the trend
        table): kept as long as the session, outside the views' byte budget. Each name has its own
        lock, so a long computation (the trend table of a million results) holds up only the
        requests that need that value."""
        with self._derived_lock:
            if name in self._derived:
                return self._derived[name]
            lock = self._derived_locks.setdefault(name, threading.Lock())
        with lock:
            if name not in self._derived:
                value = compute()
                with self._derived_lock:
                    self._derived[name] = value
            return self._derived[name]

    def ready(self, name: str) -> bool:
        """Whether the derived value ``name`` is computed (without computing it)."""
        with self._derived_lock:
            return name in self._derived


def _categorical(values: pd.Series) -> pd.Series:
    """Text column as a categorical with sorted text categories; "" and missing are missing."""
    if isinstance(values.dtype, pd.CategoricalDtype) and values.cat.categories.inferred_type in ("string", "empty"):
        cat = values
    else:
        cat = values.astype("str").astype("category")  # pandas' str dtype keeps missing as NA
    if "" in cat.cat.categories:
        cat = cat.cat.remove_categories([""])
    cats = cat.cat.categories
    if not cats.is_monotonic_increasing:  # vectorised: a million sample ids sort in milliseconds
        cat = cat.cat.reorder_categories(cats.sort_values())
        cats = cat.cat.categories
    # object-dtype categories: taking the text of a few rows is then a plain numpy take
    objects = pd.Index(np.asarray(cats, dtype=object), dtype=object)
    dtype = pd.CategoricalDtype(objects)
    return pd.Series(pd.Categorical.from_codes(cat.cat.codes.to_numpy(), dtype=dtype, validate=False),
                     index=values.index, name=values.name)


def _campaign_labels(accepted: pd.DataFrame) -> pd.Series:
    """Campaign of each result: a ``campaign`` column when the lab files carry one, else the
    calendar quarter of sampling (``2019-Q3``), the usual rhythm of monitoring programmes."""
    if "campaign" in accepted.columns:
        return accepted["campaign"].astype(str)
    q = accepted["sampled_at"].dt.quarter.astype("Int64").astype(str)
    y = accepted["sampled_at"].dt.year.astype("Int64").astype(str)
    return (y + "-Q" + q).where(accepted["sampled_at"].notna(), "undated")


def _no_rows() -> pd.DataFrame:
    return pd.DataFrame(columns=["file", "sheet", "row", "reason"])


def build_session(inputs: Inputs, key: str = BASE_KEY, release_input: bool = False,
                  part_rows: int | None = None) -> SessionData:
    """Screen the accepted results with the engine and precompute the dashboard's indexes.

    Large inputs are screened in parts of whole sites of about ``part_rows`` results
    (:mod:`tracescreen.screening.parts`), which bounds the memory the screening needs at once.

    With ``release_input``, ``inputs.accepted`` is emptied as soon as its sorted copy is made
    (the session keeps every accepted column), so the two are not both held while screening.
    """
    from tracescreen import pipeline

    acc = inputs.accepted.assign(campaign=_categorical(_campaign_labels(inputs.accepted)))
    site_codes = _categorical(acc["site_id"]).cat.codes.to_numpy()
    order = np.lexsort(
        (
            acc["row"].to_numpy() if "row" in acc else np.arange(len(acc)),
            acc["sampled_at"].to_numpy(),
            *(_categorical(acc[c]).cat.codes.to_numpy() for c in ("fraction", "analyte")),
            site_codes,
        )
    )
    acc = acc.iloc[order].reset_index(drop=True)
    site_codes = site_codes[order]
    files = inputs.files
    if files is None or not isinstance(files, pd.DataFrame) or files.empty:
        inputs.files = file_counts(inputs.accepted, inputs.rejected)
    if release_input:
        inputs.accepted = inputs.accepted.iloc[0:0]
    rid = np.arange(len(acc), dtype=np.int64)
    # The engine keeps each result's provenance columns; `row` carries the result's position
    # through screening (a file name can repeat across uploads) and is put back afterwards.
    file_row = acc["row"].to_numpy() if "row" in acc else rid + 1
    campaign = acc["campaign"]
    options = pipeline.Options(cross_fraction=inputs.cross_fraction, periods=False, statistics=None, retest=None,
                               part_rows=part_rows)
    screened, _ = pipeline.screen(acc.drop(columns="campaign").assign(row=rid), inputs.limits, inputs.sites, options)
    del acc, site_codes
    screened["_rid"] = screened["row"].to_numpy(dtype=np.int64)
    if not screened["_rid"].is_monotonic_increasing:
        screened = screened.sort_values("_rid", kind="stable").reset_index(drop=True)
    result_of_row = screened["_rid"].to_numpy()
    screened["row"] = file_row[result_of_row]
    screened["campaign"] = pd.Categorical.from_codes(campaign.cat.codes.to_numpy()[result_of_row],
                                                     dtype=campaign.dtype, validate=False)
    for col in screened.columns:
        if col in _NUMERIC_OR_DATE or col == "_rid":
            continue
        dtype = screened[col].dtype
        if dtype == object or pd.api.types.is_string_dtype(dtype) or isinstance(dtype, pd.CategoricalDtype):
            screened[col] = _categorical(screened[col])
    return _index(inputs, key, screened)


def _codes(screened: pd.DataFrame, col: str) -> tuple[np.ndarray, list[str]]:
    """Category codes of a column (the categorical's own small integer array, -1 for missing)
    and its category names."""
    if col not in screened.columns:
        return np.full(len(screened), -1, dtype=np.int8), []
    cat = screened[col]
    if not isinstance(cat.dtype, pd.CategoricalDtype):
        cat = _categorical(cat)
    # only the values present: a site whose every row was rejected is not a site of the session
    cat = cat.cat.remove_unused_categories()
    return cat.cat.codes.to_numpy(), [str(c) for c in cat.cat.categories]


def _index(inputs: Inputs, key: str, screened: pd.DataFrame) -> SessionData:
    site_code, site_ids = _codes(screened, "site_id")
    analyte_code, analytes = _codes(screened, "analyte")
    fraction_code, fractions = _codes(screened, "fraction")
    table_code, tables = _codes(screened, "limit_table")
    use_code, uses = _codes(screened, "use")
    campaign_code, campaigns = _codes(screened, "campaign")
    rank_of = np.array([SEVERITY.get(s, -1) for s in screened["status"].cat.categories], np.int8)  # higher is worse
    status_codes = screened["status"].cat.codes.to_numpy()
    rank = np.where(status_codes >= 0, rank_of[status_codes], -1).astype(np.int8)
    if "sample_type" in screened.columns:
        rank[(screened["sample_type"] != "sample").to_numpy()] = -1  # compared on the codes
    dates = screened["sampled_at"].to_numpy().astype("datetime64[D]")
    day = np.where(np.isnat(dates), NO_DAY, dates.astype(np.int64)).astype(np.int32)
    series_key = (
        site_code.astype(np.int64) * len(analytes) + analyte_code
    ) * max(len(fractions), 1) + fraction_code
    if len(series_key) and series_key.max() < np.iinfo(np.int32).max:
        series_key = series_key.astype(np.int32)
    files = inputs.files
    if files is None or not isinstance(files, pd.DataFrame) or files.empty:
        files = file_counts(inputs.accepted, inputs.rejected)
    return SessionData(
        key=key,
        screened=screened,
        rejected=inputs.rejected,
        set_aside=inputs.set_aside if inputs.set_aside is not None else _no_rows(),
        files=files,
        limits=inputs.limits,
        sites=inputs.sites,
        sources=inputs.sources,
        site_ids=site_ids,
        analytes=analytes,
        fractions=fractions,
        tables=tables,
        uses=uses,
        campaigns=campaigns,
        rid=screened["_rid"].to_numpy(),
        rank=rank,
        site_code=site_code,
        analyte_code=analyte_code,
        fraction_code=fraction_code,
        table_code=table_code,
        use_code=use_code,
        campaign_code=campaign_code,
        day=day,
        series_key=series_key,
        wells_options=inputs.wells,
    )


