"""Session data of the dashboard: the engine's outputs plus precomputed indexes, cached by key.

A *dataset key* names what a browser session is looking at: ``"base"`` (the files the dashboard was
started with) or ``"base+<token>+<token>"`` once uploads have been added. The key lives in the
browser (a ``dcc.Store``); the server rebuilds the data for a key from the base inputs and the
uploaded files kept on disk, and keeps the last few in a small cache. Nothing here is a module-level
mutable global: the :class:`DataStore` belongs to one app (``app.server.extensions``).
"""

from __future__ import annotations

import hashlib
import tempfile
import threading
from collections import OrderedDict
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

import numpy as np
import pandas as pd

from tracescreen._internal.memory import release_unused

from dashboard.memo import Memo
from dashboard.palette import STATUS_RANK
from dashboard.screen_parts import PART_ROWS, join_frames, screen_in_parts

BASE_KEY = "base"
#: ``SessionData.day`` of a result without a sampling date
NO_DAY = int(np.iinfo(np.int32).min)
STORE_EXTENSION = "tracescreen"

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
    memo: Memo = field(default_factory=Memo, repr=False)
    _derived: dict = field(default_factory=dict, repr=False)
    _derived_lock: threading.Lock = field(default_factory=threading.Lock, repr=False)

    # ---- look-ups -------------------------------------------------------------------------
    def site_name(self, site_id: str) -> str:
        """The site's name from the sites file, else its id."""
        if self.sites is not None and "name" in self.sites.columns:
            hit = self.sites.loc[self.sites["site_id"].astype(str) == str(site_id), "name"]
            if len(hit) and isinstance(hit.iloc[0], str) and hit.iloc[0]:
                return hit.iloc[0]
        return str(site_id)

    def series(self, site_id: str, analyte: str, fraction: str) -> pd.DataFrame:
        """Screened rows (all statuses, QC included) of one site, analyte and fraction, by date."""
        try:
            s = self.site_ids.index(site_id)
            a = self.analytes.index(analyte)
            f = self.fractions.index(fraction)
        except ValueError:
            return self.screened.iloc[0:0]
        k = (s * len(self.analytes) + a) * len(self.fractions) + f
        lo, hi = np.searchsorted(self.series_key, [k, k + 1])
        return self.screened.iloc[lo:hi]

    def cached(self, name: str, args: tuple, compute: Callable[[], Any], size: int | None = None) -> Any:
        """Per-session memo of a view keyed by ``(name, args)``: the least recently used values
        go first, at most ``size`` per name (default :data:`dashboard.memo.DEFAULT_ENTRIES`) and
        :data:`dashboard.memo.DEFAULT_BYTES` for the session (:class:`dashboard.memo.Memo`)."""
        return self.memo.get(name, args, compute, entries=size)

    def derived(self, name: str, compute: Callable[[], Any]) -> Any:
        """A value derived once from the whole session (the exceedance rows, the retest list):
        kept as long as the session, outside the views' byte budget."""
        with self._derived_lock:
            if name not in self._derived:
                self._derived[name] = compute()
            return self._derived[name]


# ---- building ---------------------------------------------------------------------------------
def load_inputs(results, limits, sites=None, columns=None, options=None, workspace=None) -> Inputs:
    """Load result files, limit tables and sites with the engine (user errors raise ValueError).

    ``options`` (the engine's LoadOptions) says how to read the files; without it, defaults with
    the optional ``columns`` mapping file. With ``workspace`` (a folder), the current results of
    that workspace are used instead of ``results`` (one consistent state, even during an import).
    """
    from tracescreen.limits.load import load_limits
    from tracescreen.io.loading import load_results
    from tracescreen.io.sites import load_sites

    paths = [Path(p) for p in ([results] if isinstance(results, (str, Path)) else results or [])]
    site_frame = load_sites(sites) if sites is not None else None
    limit_set = load_limits(limits)
    opts = options if options is not None else load_options(columns)
    sites_name = Path(sites).name if sites is not None else "the sites file"
    if workspace is not None:
        from tracescreen.store.workspace import open_workspace

        with open_workspace(workspace) as ws:
            loaded = ws.load_result(site_frame, sites_name)
        paths = [Path(workspace)]
    else:
        loaded = load_results(paths, opts, sites=site_frame, sites_name=sites_name)
    return Inputs(
        accepted=loaded.accepted,
        rejected=loaded.rejected,
        limits=limit_set,
        sites=site_frame,
        files=loaded.files,
        sources=tuple(str(p) for p in paths),
        options=opts,
        sites_name=sites_name,
        set_aside=loaded.set_aside,
    )


def load_options(columns=None):
    """The engine's LoadOptions with an optional column-mapping YAML file."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions

    return LoadOptions(column_map=load_column_map(columns) if columns else None)


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


def file_counts(accepted: pd.DataFrame, rejected: pd.DataFrame) -> pd.DataFrame:
    """Rows read, accepted and rejected per input file (rows read = accepted + rejected)."""
    acc = accepted.groupby("file", observed=True).size().rename("accepted")
    rej = rejected.groupby("file", observed=True).size().rename("rejected") if len(rejected) else None
    out = pd.concat([acc, rej], axis=1) if rej is not None else acc.to_frame()
    out = out.fillna(0).astype("int64")
    if "rejected" not in out:
        out["rejected"] = 0
    out["rows_read"] = out["accepted"] + out["rejected"]
    return out.reset_index(names="file")[["file", "rows_read", "accepted", "rejected"]]


def build_session(inputs: Inputs, key: str = BASE_KEY, release_input: bool = False,
                  part_rows: int = PART_ROWS) -> SessionData:
    """Screen the accepted results with the engine and precompute the dashboard's indexes.

    Large inputs are screened in parts of whole sites of about ``part_rows`` results
    (:mod:`dashboard.screen_parts`), which bounds the memory the screening needs at once.

    With ``release_input``, ``inputs.accepted`` is emptied as soon as its sorted copy is made
    (the session keeps every accepted column), so the two are not both held while screening.
    """
    from tracescreen.screening.screen import screen

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
    screened = screen_in_parts(acc.drop(columns="campaign").assign(row=rid), site_codes,
                               lambda part: screen(part, inputs.limits, inputs.sites), _categorical, part_rows)
    del acc
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
    return cat.cat.codes.to_numpy(), [str(c) for c in cat.cat.categories]


def _index(inputs: Inputs, key: str, screened: pd.DataFrame) -> SessionData:
    site_code, site_ids = _codes(screened, "site_id")
    analyte_code, analytes = _codes(screened, "analyte")
    fraction_code, fractions = _codes(screened, "fraction")
    table_code, tables = _codes(screened, "limit_table")
    use_code, uses = _codes(screened, "use")
    campaign_code, campaigns = _codes(screened, "campaign")
    rank_of = np.array([STATUS_RANK.get(s, -1) for s in screened["status"].cat.categories], np.int8)
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
    )


def text_values(series: pd.Series) -> np.ndarray:
    """A text column as an object array of str ("" for missing).

    For a categorical this takes only the categories in use: a slice of a million-row session
    shares categories with the whole, and converting all of them would dominate a callback.
    """
    if isinstance(series.dtype, pd.CategoricalDtype):
        codes = series.array.codes
        cats = np.asarray(series.dtype.categories, dtype=object)  # no copy for object categories
        out = np.full(len(codes), "", dtype=object)
        used = codes >= 0
        out[used] = cats[codes[used]]
        return out
    return series.astype(object).where(series.notna(), "").astype(str).to_numpy(dtype=object)


def plain_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy with categorical text columns turned back into plain strings ("" for missing)."""
    out = frame.copy()
    for col in out.columns:
        if isinstance(out[col].dtype, pd.CategoricalDtype):
            out[col] = pd.Series(text_values(out[col]), index=out.index, dtype=str)
    return out


def engine_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """The engine's text convention for a slice of session rows: missing text is "" again.

    Categorical columns stay categorical (the codes of missing values point to an added ""
    category); no text is materialised, so this is cheap on a million rows.
    """
    changed = {}
    for col in frame.columns:
        values = frame[col]
        if isinstance(values.dtype, pd.CategoricalDtype) and "" not in values.dtype.categories:
            codes = values.array.codes
            if not (codes < 0).any():
                continue
            cats = values.dtype.categories
            codes = np.where(codes < 0, len(cats), codes)
            dtype = pd.CategoricalDtype(cats.append(pd.Index([""], dtype=cats.dtype)))
            changed[col] = pd.Categorical.from_codes(codes, dtype=dtype, validate=False)
    return frame.assign(**changed) if changed else frame


def accepted_from_session(session: SessionData) -> pd.DataFrame:
    """The accepted result rows behind a session (one row per result, engine columns only; text as
    categoricals with "" for missing, see :func:`engine_frame`)."""
    starts = np.flatnonzero(np.r_[True, session.rid[1:] != session.rid[:-1]]) if len(session.rid) else []
    added = {"hardness_used_mg_L", "hardness_origin", "limit_table", "use", "duration", "basis",
             "limit_ug_L", "ratio", "status", "source", "note", "_rid", "campaign"}
    acc = session.screened.iloc[starts]
    return engine_frame(acc[[c for c in acc.columns if c not in added]].reset_index(drop=True))


def session_nbytes(session: SessionData) -> int:
    """Estimated bytes a session holds: its screened rows and index arrays."""
    from dashboard.memo import approx_nbytes

    arrays = (session.rank, session.site_code, session.analyte_code, session.fraction_code, session.table_code,
              session.use_code, session.campaign_code, session.day, session.series_key)
    return approx_nbytes(session.screened) + sum(a.nbytes for a in arrays) + session.memo.nbytes


# ---- the per-app store ------------------------------------------------------------------------
def content_token(*parts: bytes) -> str:
    """Short content hash naming an upload (same bytes, same token)."""
    h = hashlib.sha256()
    for p in parts:
        h.update(hashlib.sha256(p).digest())
    return h.hexdigest()[:16]


class DataStore:
    """Base inputs, uploaded files on disk and a small cache of :class:`SessionData` by key.

    Parameters
    ----------
    base : callable or Inputs
        The base inputs, or a function returning them (called once, lazily).
    upload_dir : path, optional
        Where accepted uploads are kept (a temporary directory by default).
    max_upload_bytes : int
        Size cap of one uploaded file [bytes].
    cache_size : int
        How many dataset keys with uploads are kept screened in memory (besides the base data).
    cache_bytes : int
        Bytes those sessions may hold together [bytes]; the least recently used go first, but the
        most recent one is always kept (a million-result base makes each upload session as large).
    """

    def __init__(self, base, upload_dir=None, max_upload_bytes: int = 20 * 2**20, cache_size: int = 3,
                 cache_bytes: int = 400 * 2**20):
        self._base = base
        self._base_inputs: Inputs | None = None
        self._tmp = None
        if upload_dir is None:
            self._tmp = tempfile.TemporaryDirectory(prefix="tracescreen-uploads-")
            upload_dir = self._tmp.name
        self.upload_dir = Path(upload_dir)
        self.upload_dir.mkdir(parents=True, exist_ok=True)
        self.max_upload_bytes = int(max_upload_bytes)
        self._base_session: SessionData | None = None
        self._cache: OrderedDict[str, SessionData] = OrderedDict()
        self._cache_size = cache_size
        self._cache_bytes = int(cache_bytes)
        self._lock = threading.RLock()

    # base
    def base_inputs(self) -> Inputs:
        with self._lock:
            if self._base_inputs is None:
                self._base_inputs = self._base() if callable(self._base) else self._base
            return self._base_inputs

    @property
    def sites(self) -> pd.DataFrame | None:
        return self.base_inputs().sites

    # uploads
    def upload_path(self, token: str) -> Path:
        return self.upload_dir / token

    def save_upload(self, filename: str, content: bytes, mapping: bytes | None) -> str:
        """Keep an uploaded file (and its column mapping) on disk; return its token."""
        token = content_token(filename.encode(), content, mapping or b"")
        folder = self.upload_path(token)
        folder.mkdir(parents=True, exist_ok=True)
        (folder / Path(filename).name).write_bytes(content)
        if mapping:
            (folder / "_columns.yaml").write_bytes(mapping)
        return token

    def load_upload(self, token: str):
        """Load one kept upload with the engine; returns the engine's LoadResult."""
        from tracescreen.io.loading import load_results

        folder = self.upload_path(token)
        if not token.isalnum() or not folder.is_dir():
            raise KeyError(token)
        import dataclasses

        files = [p for p in sorted(folder.iterdir()) if p.name != "_columns.yaml"]
        mapping = folder / "_columns.yaml"
        base = self.base_inputs()
        opts = base.options if base.options is not None else load_options(None)
        # an upload is read like the base files (dates, decimal comma), with its own mapping
        opts = dataclasses.replace(opts, column_map=load_options(mapping).column_map if mapping.exists() else None)
        return load_results(files, opts, sites=self.sites, sites_name=base.sites_name)

    # sessions
    def base_session(self) -> SessionData:
        """The screened base data (built once and kept; the loaded rows are then released)."""
        with self._lock:
            if self._base_session is None:
                self._base_session = build_session(self.base_inputs(), BASE_KEY, release_input=True)
                release_unused()
            return self._base_session

    def get(self, key: str | None) -> SessionData:
        """The session data for a dataset key (unknown tokens fall back to the base data)."""
        tokens = [t for t in (key or "").split("+")[1:] if t]
        if not tokens:
            return self.base_session()
        with self._lock:
            if key in self._cache:
                self._cache.move_to_end(key)
                return self._cache[key]
        session = self._build(tokens)
        with self._lock:
            self._cache[key] = session
            while len(self._cache) > 1 and (len(self._cache) > self._cache_size
                                            or sum(map(session_nbytes, self._cache.values())) > self._cache_bytes):
                self._cache.popitem(last=False)
        release_unused()
        return session

    def _build(self, tokens: list[str]) -> SessionData:
        base = self.base_session()
        accepted, rejected, files, kept = [accepted_from_session(base)], [base.rejected], [base.files], []
        aside = [base.set_aside]
        for token in tokens:
            try:
                loaded = self.load_upload(token)
            except (KeyError, ValueError, OSError):
                continue
            accepted.append(loaded.accepted)
            rejected.append(loaded.rejected)
            aside.append(loaded.set_aside)
            files.append(loaded.files)
            kept.append(token)
        # categorical text joined category-wise; the engine writes missing text as "", never NaN
        merged = engine_frame(join_frames(accepted))
        del accepted
        inputs = Inputs(
            accepted=merged,
            rejected=pd.concat([r for r in rejected if len(r)] or [base.rejected], ignore_index=True),
            set_aside=pd.concat([r for r in aside if len(r)] or [base.set_aside], ignore_index=True),
            limits=base.limits,
            sites=base.sites,
            files=pd.concat(files, ignore_index=True),
            sources=base.sources + tuple(f"upload {t}" for t in kept),
        )
        del merged
        return build_session(inputs, "+".join([BASE_KEY, *kept]), release_input=True)


def current_store() -> DataStore:
    """The DataStore of the app serving the current request."""
    import flask

    return flask.current_app.extensions[STORE_EXTENSION]


def current_session(key: str | None) -> SessionData:
    """Session data for a dataset key, from the app serving the current request."""
    return current_store().get(key)


__all__ = [
    "BASE_KEY",
    "NO_DAY",
    "DataStore",
    "Inputs",
    "SessionData",
    "accepted_from_session",
    "build_session",
    "current_session",
    "current_store",
    "engine_frame",
    "file_counts",
    "load_inputs",
    "plain_frame",
    "session_nbytes",
    "text_values",
]
