"""Overview logic: filters, worst status per site and metal, and the matrix and map views of it.

All counting is vectorised over the session's precomputed code arrays: a filter is a boolean mask,
the worst status of each result is a ``maximum.reduceat`` over its contiguous rows, and the counts
per cell and status are one ``bincount``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from dashboard.state.session import NO_DAY, SessionData
from tracescreen import vocabulary

N_STATUS = len(vocabulary.RANKED)


@dataclass(frozen=True)
class Filters:
    """The overview's filters; empty tuples and ``None`` mean "all"."""

    uses: tuple[str, ...] = ()
    tables: tuple[str, ...] = ()
    fraction: str | None = None
    start: str | None = None  # ISO date, inclusive
    end: str | None = None  # ISO date, inclusive
    campaigns: tuple[str, ...] = ()

    def without_fraction(self) -> "Filters":
        """The same filters over every fraction."""
        return Filters(self.uses, self.tables, None, self.start, self.end, self.campaigns)

    @classmethod
    def from_controls(cls, uses=None, tables=None, fraction=None, start=None, end=None, campaigns=None):
        """Build from Dash control values (lists, ``"all"``, date strings with optional time)."""

        def tup(v):
            if v is None or v == "":
                return ()
            return tuple(sorted(str(x) for x in ([v] if isinstance(v, str) else v)))

        def day(v):
            return str(v)[:10] if v else None

        return cls(tup(uses), tup(tables), None if fraction in (None, "", "all") else fraction,
                   day(start), day(end), tup(campaigns))


def _allowed(codes: np.ndarray, names: list[str], wanted: tuple[str, ...]) -> np.ndarray:
    """Mask of rows whose code names one of ``wanted`` (code -1, i.e. missing, never matches)."""
    lut = np.zeros(len(names) + 1, dtype=bool)  # the extra slot is what code -1 indexes
    for w in wanted:
        if w in names:
            lut[names.index(w)] = True
    return lut[codes]


def row_mask(session: SessionData, f: Filters, lo: int = 0, hi: int | None = None) -> np.ndarray:
    """Screened rows ``lo:hi`` that count for the overview: site samples passing every filter."""
    sl = slice(lo, hi)
    mask = session.rank[sl] >= 0
    if f.uses:
        mask &= _allowed(session.use_code[sl], session.uses, f.uses)
    if f.tables:
        mask &= _allowed(session.table_code[sl], session.tables, f.tables)
    if f.fraction:
        mask &= _allowed(session.fraction_code[sl], session.fractions, (f.fraction,))
    if f.start:
        mask &= session.day[sl] >= int(np.datetime64(f.start, "D").astype(np.int64))  # a Python int keeps int32
    if f.end:
        mask &= session.day[sl] <= int(np.datetime64(f.end, "D").astype(np.int64))
    if f.campaigns:
        mask &= _allowed(session.campaign_code[sl], session.campaigns, f.campaigns)
    return mask


def worst_per_result(session: SessionData, mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Row positions of the first masked row of each result and that result's worst rank."""
    idx = np.flatnonzero(mask)
    if not len(idx):
        return idx, np.zeros(0, dtype=np.int8)
    rid = session.rid[idx]
    starts = np.flatnonzero(np.r_[True, rid[1:] != rid[:-1]])
    worst = np.maximum.reduceat(session.rank[idx], starts)
    return idx[starts], worst


def status_counts(session: SessionData, f: Filters) -> np.ndarray:
    """Results per site, analyte and worst status: int array ``[site, analyte, status]``.

    The status axis follows :data:`dashboard.palette.vocabulary.RANKED` (worst first). A result counts
    once, under the worst status among the screening rows that pass the filters.
    """
    rows, worst = worst_per_result(session, row_mask(session, f))
    n_a = len(session.analytes)
    cell = session.site_code[rows].astype(np.int64) * n_a + session.analyte_code[rows]
    status_idx = (N_STATUS - 1) - worst.astype(np.int64)
    flat = np.bincount(cell * N_STATUS + status_idx, minlength=len(session.site_ids) * n_a * N_STATUS)
    return flat.reshape(len(session.site_ids), n_a, N_STATUS)


def cached_status_counts(session: SessionData, f: Filters) -> np.ndarray:
    """:func:`status_counts`, memoised per session and filters."""
    return session.cached("status_counts", (f,), lambda: status_counts(session, f))


def worst_status(counts: np.ndarray) -> np.ndarray:
    """Index into vocabulary.RANKED of the worst status with a count, ``-1`` where there is none."""
    has = counts > 0
    first = has.argmax(axis=-1)
    return np.where(has.any(axis=-1), first, -1)


def matrix_frame(session: SessionData, counts: np.ndarray) -> pd.DataFrame:
    """Long table of the matrix: one row per site and analyte with results.

    Columns: ``site_id, analyte, worst, n_results`` and one count column per status.
    """
    s_idx, a_idx = np.nonzero(counts.sum(axis=-1))
    sub = counts[s_idx, a_idx]
    out = pd.DataFrame(
        {
            "site_id": np.asarray(session.site_ids, dtype=object)[s_idx],
            "analyte": np.asarray(session.analytes, dtype=object)[a_idx],
            "worst": np.asarray(vocabulary.RANKED, dtype=object)[worst_status(sub)],
            "n_results": sub.sum(axis=-1),
        }
    )
    for i, s in enumerate(vocabulary.RANKED):
        out[s] = sub[:, i]
    return out


def site_worst(session: SessionData, counts: np.ndarray) -> pd.DataFrame:
    """Worst status per site over all analytes, with coordinates when the sites file has them."""
    per_site = counts.sum(axis=1)
    has = per_site.sum(axis=-1) > 0
    idx = np.flatnonzero(has)
    out = pd.DataFrame(
        {
            "site_id": np.asarray(session.site_ids, dtype=object)[idx],
            "worst": np.asarray(vocabulary.RANKED, dtype=object)[worst_status(per_site[idx])],
            "n_results": per_site[idx].sum(axis=-1),
            "n_exceeds": per_site[idx, vocabulary.RANKED.index("exceeds")],
        }
    )
    if session.sites is not None:
        cols = [c for c in ("site_id", "name", "latitude", "longitude") if c in session.sites.columns]
        sites = session.sites[cols].copy()
        sites["site_id"] = sites["site_id"].astype(str)
        out = out.merge(sites, on="site_id", how="left")
    else:
        out["name"] = out["site_id"]
    return out


def filter_options(session: SessionData) -> tuple:
    """Options of the filter controls for a session: uses, tables, fractions, date bounds, campaigns."""
    tables = []
    tt = getattr(session.limits, "tables", None)
    names = {}
    if tt is not None and "table_id" in tt:
        names = dict(zip(tt["table_id"].astype(str), tt.get("name", tt["table_id"]).astype(str)))
    for t in session.tables:
        tables.append({"label": f"{t} — {names.get(t, t)}", "value": t})
    fractions = [{"label": "all fractions", "value": "all"}] + [
        {"label": f, "value": f} for f in session.fractions]
    days = session.day[session.day != NO_DAY]
    lo = str(days.min().astype("datetime64[D]")) if len(days) else None
    hi = str(days.max().astype("datetime64[D]")) if len(days) else None
    return ([{"label": u, "value": u} for u in session.uses], tables, fractions, lo, hi,
            [{"label": c, "value": c} for c in session.campaigns])


#: columns of :func:`cell_table` (one row per site and metal with results)
CELL_COLUMNS = ["site_id", "analyte", "n_results", "n_exceeds", "worst", "latest_campaign", "latest",
                "latest_n", "latest_exceeds", "first_exceedance", "last_exceedance", "fractions"]


def _series_ends(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First and last positions of each run of equal keys (``keys`` sorted by runs)."""
    if not len(keys):
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    change = np.flatnonzero(keys[1:] != keys[:-1]) + 1
    return np.r_[0, change], np.r_[change - 1, len(keys) - 1]


def cell_table(session: SessionData, f: Filters) -> pd.DataFrame:
    """Per site and metal (the overview's cells): results, worst status over the period, the latest
    campaign's status, and the first and last dates of a result above a limit.

    The latest campaign of a cell is the campaign of its latest sampling date among the results
    passing the filters; its status is the worst of the cell's results in that campaign. All
    vectorised: the session's rows are sorted by series and date, so each series' first and last
    rows are the ends of its run (no sort here).
    """
    rows, worst = worst_per_result(session, row_mask(session, f))
    n_a = len(session.analytes)
    n_cells = len(session.site_ids) * n_a
    cell = session.site_code[rows].astype(np.int64) * n_a + session.analyte_code[rows]
    day = session.day[rows].astype(np.int64)
    camp = session.campaign_code[rows].astype(np.int64)
    # latest day of each cell: the last result of each of its series (rows are in date order per series)
    _, last = _series_ends(session.series_key[rows])
    latest_day = np.full(n_cells, np.iinfo(np.int64).min)
    np.maximum.at(latest_day, cell[last], day[last])
    at_latest = last[day[last] == latest_day[cell[last]]]
    latest_camp = np.full(n_cells, -2, dtype=np.int64)
    np.maximum.at(latest_camp, cell[at_latest], camp[at_latest])
    in_latest = camp == latest_camp[cell]
    status_idx = (N_STATUS - 1) - worst.astype(np.int64)
    counts = np.bincount(cell * N_STATUS + status_idx, minlength=n_cells * N_STATUS).reshape(n_cells, N_STATUS)
    latest_counts = np.bincount(cell[in_latest] * N_STATUS + status_idx[in_latest],
                                minlength=n_cells * N_STATUS).reshape(n_cells, N_STATUS)
    ex = np.flatnonzero(status_idx == vocabulary.RANKED.index("exceeds"))
    first_ex = np.full(n_cells, np.iinfo(np.int64).max)
    last_ex = np.full(n_cells, np.iinfo(np.int64).min)
    if len(ex):
        lo, hi = _series_ends(session.series_key[rows[ex]])
        np.minimum.at(first_ex, cell[ex[lo]], day[ex[lo]])
        np.maximum.at(last_ex, cell[ex[hi]], day[ex[hi]])
    n_f = max(len(session.fractions), 1)
    frac_bits = np.zeros(n_cells, dtype=np.int64)
    np.bitwise_or.at(frac_bits, cell[last], 1 << (session.series_key[rows[last]].astype(np.int64) % n_f))
    has = np.flatnonzero(counts.sum(axis=1))
    ranked = np.asarray(vocabulary.RANKED, dtype=object)
    no_day = np.iinfo(np.int64).max

    def dates(values, missing):
        v = values[has]
        out = np.where(v == missing, np.iinfo(np.int64).min, v).astype("datetime64[D]")
        return np.where(v == missing, np.datetime64("NaT"), out)

    lw = worst_status(latest_counts[has])
    return CellTable({
        "site_id": np.asarray(session.site_ids, dtype=object)[has // n_a],
        "analyte": np.asarray(session.analytes, dtype=object)[has % n_a],
        "n_results": counts[has].sum(axis=1),
        "n_exceeds": counts[has, vocabulary.RANKED.index("exceeds")],
        "worst": ranked[worst_status(counts[has])],
        "latest_campaign": np.asarray(session.campaigns + ["", ""], dtype=object)[latest_camp[has]],
        "latest": np.where(lw >= 0, ranked[np.maximum(lw, 0)], ""),
        "latest_n": latest_counts[has].sum(axis=1),
        "latest_exceeds": latest_counts[has, vocabulary.RANKED.index("exceeds")],
        "first_exceedance": dates(first_ex, no_day),
        "last_exceedance": dates(last_ex, np.iinfo(np.int64).min),
        "fractions": _fraction_names(session, frac_bits[has], n_f),
    }, counts.sum(axis=0), latest_counts.sum(axis=0))


def _fraction_names(session: SessionData, bits: np.ndarray, n_f: int) -> np.ndarray:
    """"total, dissolved" for each cell's set of fractions (one text per distinct set)."""
    names = {b: ", ".join(session.fractions[i] for i in range(n_f) if b >> i & 1) for b in np.unique(bits).tolist()}
    return np.asarray([names[b] for b in bits.tolist()], dtype=object)


@dataclass
class CellTable:
    """:func:`cell_table`: one array per column (:data:`CELL_COLUMNS`), and the results per status over the
    period (``totals``) and in each cell's latest campaign (``latest_totals``), worst first."""

    columns: dict
    totals: np.ndarray
    latest_totals: np.ndarray

    def __len__(self) -> int:
        return len(self.columns["site_id"])

    @property
    def empty(self) -> bool:
        """No cell has results."""
        return len(self) == 0

    def __getitem__(self, name: str) -> np.ndarray:
        return self.columns[name]

    def rows(self):
        """Each cell as a dict of its columns (a few hundred cells: plain Python is fine)."""
        cols = [self.columns[c] for c in CELL_COLUMNS]
        return (dict(zip(CELL_COLUMNS, values)) for values in zip(*cols))

    def frame(self) -> pd.DataFrame:
        """The cells as a DataFrame."""
        return pd.DataFrame(self.columns)[CELL_COLUMNS]


def cached_cell_table(session: SessionData, f: Filters) -> pd.DataFrame:
    """:func:`cell_table`, memoised per session and filters."""
    return session.cached("cell_table", (f,), lambda: cell_table(session, f))


def filter_query(f: Filters) -> str:
    """The filters as the address writes them (``uses=...&start=...``), without the fraction."""
    from urllib.parse import urlencode

    params = {"uses": ",".join(f.uses), "tables": ",".join(f.tables), "start": f.start or "", "end": f.end or "",
              "campaigns": ",".join(f.campaigns)}
    return urlencode({k: v for k, v in params.items() if v})
