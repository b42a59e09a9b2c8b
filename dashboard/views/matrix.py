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


def row_mask(session: SessionData, f: Filters) -> np.ndarray:
    """Screened rows that count for the overview: site samples passing every filter."""
    mask = session.rank >= 0
    if f.uses:
        mask &= _allowed(session.use_code, session.uses, f.uses)
    if f.tables:
        mask &= _allowed(session.table_code, session.tables, f.tables)
    if f.fraction:
        mask &= _allowed(session.fraction_code, session.fractions, (f.fraction,))
    if f.start:
        mask &= session.day >= int(np.datetime64(f.start, "D").astype(np.int64))  # a Python int keeps int32
    if f.end:
        mask &= session.day <= int(np.datetime64(f.end, "D").astype(np.int64))
    if f.campaigns:
        mask &= _allowed(session.campaign_code, session.campaigns, f.campaigns)
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
