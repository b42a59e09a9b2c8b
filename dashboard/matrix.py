"""Overview logic: filters, worst status per site and metal, and the matrix and map views of it.

All counting is vectorised over the session's precomputed code arrays: a filter is a boolean mask,
the worst status of each result is a ``maximum.reduceat`` over its contiguous rows, and the counts
per cell and status are one ``bincount``.
"""

from __future__ import annotations

from dataclasses import dataclass
from html import escape
from urllib.parse import quote_plus

import numpy as np
import pandas as pd
from dash import html

from dashboard.data import SessionData
from dashboard.palette import STATUS_GLYPH, STATUS_LABEL, STATUS_ORDER, STATUS_SHORT

N_STATUS = len(STATUS_ORDER)


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

    The status axis follows :data:`dashboard.palette.STATUS_ORDER` (worst first). A result counts
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
    """Index into STATUS_ORDER of the worst status with a count, ``-1`` where there is none."""
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
            "worst": np.asarray(STATUS_ORDER, dtype=object)[worst_status(sub)],
            "n_results": sub.sum(axis=-1),
        }
    )
    for i, s in enumerate(STATUS_ORDER):
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
            "worst": np.asarray(STATUS_ORDER, dtype=object)[worst_status(per_site[idx])],
            "n_results": per_site[idx].sum(axis=-1),
            "n_exceeds": per_site[idx, STATUS_ORDER.index("exceeds")],
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


# ---- rendering ---------------------------------------------------------------------------------
def status_badges(totals: np.ndarray, element_id: str = "status-totals") -> html.Div:
    """Totals per status as labelled badges (glyph, label, count)."""
    return html.Div(
        [
            html.Span(
                [html.Span(STATUS_GLYPH[s], className="glyph"), f" {STATUS_LABEL[s]}: ",
                 html.B(f"{int(totals[i]):,}")],
                className=f"badge status-{s}",
                **{"data-status": s, "data-count": str(int(totals[i]))},
            )
            for i, s in enumerate(STATUS_ORDER)
        ],
        id=element_id,
        className="badges",
    )


def matrix_table(session: SessionData, counts: np.ndarray, fraction: str | None = None) -> str:
    """Sites x metals table as HTML text; each cell shows the worst status (glyph and words) and
    counts and links to that site and metal.

    The table is sent as text and put in place by the browser's own HTML parser
    (``assets/matrix.js``), which draws hundreds of cells far sooner than as many Dash components
    or a Markdown component would; ``assets/links.js`` keeps its links inside the app. Every
    piece of text is escaped here.
    """
    frame = matrix_frame(session, counts)
    if frame.empty:
        return "<p id='matrix-empty'>No results match these filters.</p>"
    analytes = sorted(frame["analyte"].unique())
    cells = {(r.site_id, r.analyte): r for r in frame.itertuples(index=False)}

    def e(text) -> str:
        return escape(str(text), quote=True)

    q_site = {sid: quote_plus(str(sid)) for sid in frame["site_id"].unique()}
    q_metal = {a: quote_plus(str(a)) for a in analytes}
    tail = f"&amp;fraction={quote_plus(fraction)}" if fraction else ""
    parts = ["<table class='matrix' id='matrix-table'><thead><tr><th>Site</th>"]
    parts += [f"<th scope='col'>{e(a)}</th>" for a in analytes]
    parts.append("</tr></thead><tbody>")
    for site_id in sorted(frame["site_id"].unique()):
        name = session.site_name(site_id)
        parts.append(f"<tr><th scope='row'><span class='site-id'>{e(site_id)}</span>"
                     + (f"<br><span class='site-name'>{e(name)}</span>" if name != site_id else "") + "</th>")
        for a in analytes:
            r = cells.get((site_id, a))
            if r is None:
                parts.append("<td class='empty'>–</td>")
                continue
            title = f"{site_id} · {a}: worst {STATUS_LABEL[r.worst]}; {r.exceeds} of {r.n_results} results above a limit"
            # kept short (a thousand cells): the status is the cell's class, the line break a
            # newline (the link's white-space is pre-line)
            parts.append(
                f"<td class='cell status-{r.worst}' data-site='{e(site_id)}' data-analyte='{e(a)}'>"
                f"<a href='/site?site={q_site[site_id]}&amp;analyte={q_metal[a]}{tail}' title='{e(title)}'>"
                f"<b class='glyph'>{STATUS_GLYPH[r.worst]}</b> {STATUS_SHORT[r.worst]}\n{r.exceeds}/{r.n_results}</a></td>"
            )
        parts.append("</tr>")
    parts.append("</tbody></table>")
    return "".join(parts)
