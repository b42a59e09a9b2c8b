"""The overview matrix and status badges as HTML (numbers from :mod:`dashboard.views.matrix`)."""

from __future__ import annotations

from html import escape
from types import SimpleNamespace
from urllib.parse import quote_plus

import numpy as np
import pandas as pd
from dash import html

from dashboard.state.session import SessionData
from dashboard.views.matrix import CellTable, Filters, filter_query
from dashboard.views.trends import ARROW, DIRECTION_WORDS
from tracescreen import vocabulary


# ---- rendering ---------------------------------------------------------------------------------
def status_badges(totals: np.ndarray, element_id: str = "status-totals") -> html.Div:
    """Totals per status as labelled badges (glyph, label, count)."""
    return html.Div(
        [
            html.Span(
                [html.Span(vocabulary.GLYPH[s], className="glyph"), f" {vocabulary.LABEL[s]}: ",
                 html.B(f"{int(totals[i]):,}")],
                className=f"badge status-{s}",
                **{"data-status": s, "data-count": str(int(totals[i]))},
            )
            for i, s in enumerate(vocabulary.RANKED)
        ],
        id=element_id,
        className="badges",
    )


def _when(d) -> str:
    return "" if d is None or pd.isna(d) else str(pd.Timestamp(d).date())


def _trend_parts(trends: list | None, fractions: str) -> tuple[str, str]:
    """Arrows for the cell (fraction letter when the cell spans several) and the trend in words."""
    if not trends:
        return "", ""
    several = "," in fractions
    arrows, words = [], []
    for fraction, direction, p in sorted(trends):
        arrow = ARROW.get(direction, "") if direction in ("increasing", "decreasing") else ""
        if arrow:
            arrows.append(arrow + (fraction[:1] if several else ""))
        words.append(f"{fraction} {DIRECTION_WORDS.get(direction, direction)}"
                     + (f" (p = {p:.2g})" if p == p and direction != "too_few" else ""))
    return " ".join(arrows), "; ".join(words)


def matrix_table(session: SessionData, cells: CellTable, filters: Filters, view: str = "worst",
                 trends: dict | None = None) -> str:
    """Sites x metals table as HTML text; each cell shows the worst status over the period or the
    latest campaign's status (``view``), its glyph and words, counts, the other status as a glyph,
    the trend arrow, and links to the chart of that site and metal with the same filters.

    The table is sent as text and put in place by the browser's own HTML parser
    (``assets/matrix.js``), which draws hundreds of cells far sooner than as many Dash components
    would; ``assets/links.js`` keeps its links inside the app. Every piece of text is escaped here.
    """
    if cells.empty:
        return "<p id='matrix-empty'>No results match these filters.</p>"
    analytes = sorted(set(cells["analyte"].tolist()))
    by_cell = {(r["site_id"], r["analyte"]): SimpleNamespace(**r) for r in cells.rows()}

    def e(text) -> str:
        return escape(str(text), quote=True)

    shared = filter_query(filters)
    site_ids = sorted(set(cells["site_id"].tolist()))
    q_site = {sid: quote_plus(str(sid)) for sid in site_ids}
    q_metal = {a: quote_plus(str(a)) for a in analytes}
    label, glyph, short = vocabulary.LABEL, vocabulary.GLYPH, vocabulary.SHORT
    parts = ["<table class='matrix' id='matrix-table'><caption class='sr-only'>Worst status of each site and metal"
             "</caption><thead><tr><th scope='col'>Site</th>"]
    parts += [f"<th scope='col'>{e(a)}</th>" for a in analytes]
    parts.append("</tr></thead><tbody>")
    for site_id in site_ids:
        name = session.site_name(site_id)
        parts.append(f"<tr><th scope='row'><span class='site-id'>{e(site_id)}</span>"
                     + (f"<br><span class='site-name'>{e(name)}</span>" if name != site_id else "") + "</th>")
        for a in analytes:
            r = by_cell.get((site_id, a))
            if r is None:
                parts.append("<td class='empty'>–</td>")
                continue
            arrows, trend_words = _trend_parts((trends or {}).get((site_id, a)), r.fractions)
            latest = r.latest or r.worst
            shown, other = (latest, r.worst) if view == "latest" else (r.worst, latest)
            counts = (f"{r.latest_exceeds}/{r.latest_n}" if view == "latest" else f"{r.n_exceeds}/{r.n_results}")
            other_glyph = (f" <span class='other status-text status-{other}' aria-hidden='true'>{glyph[other]}</span>"
                           if other != shown else "")
            title = (f"{site_id} · {a} ({r.fractions}). Worst over the period: {label[r.worst]} "
                     f"({r.n_exceeds} of {r.n_results} results above a limit). Latest campaign "
                     f"{r.latest_campaign}: {label[latest]} ({r.latest_exceeds} of {r.latest_n}).")
            if r.n_exceeds:
                title += f" First exceedance {_when(r.first_exceedance)}, last {_when(r.last_exceedance)}."
            if trend_words:
                title += f" Trend: {trend_words}."
            fraction = filters.fraction or (r.fractions if "," not in r.fractions else "all")
            href = f"/site?site={q_site[site_id]}&amp;analyte={q_metal[a]}&amp;fraction={quote_plus(fraction)}"
            href += f"&amp;{e(shared)}" if shared else ""
            # kept short (a thousand cells): the status is the cell's class, the line break a
            # newline (the link's white-space is pre-line)
            parts.append(
                f"<td class='cell status-{shown}' data-site='{e(site_id)}' data-analyte='{e(a)}' "
                f"data-n='{r.n_results}' data-latest='{latest}' data-worst='{r.worst}'>"
                f"<a href='{href}' title='{e(title)}'>"
                f"<b class='glyph'>{glyph[shown]}</b> {short[shown]}\n{counts}{other_glyph}"
                + (f" <span class='trend-arrow'>{e(arrows)}</span>" if arrows else "") + "</a></td>"
            )
        parts.append("</tr>")
    parts.append("</tbody></table>")
    return "".join(parts)


def cell_rows(session: SessionData, cells: CellTable, trends: dict | None) -> list[dict]:
    """The matrix as one row per site and metal (the "data as a table" view)."""
    label = vocabulary.LABEL
    out = []
    for r in map(lambda d: SimpleNamespace(**d), cells.rows()):
        arrows, words = _trend_parts((trends or {}).get((r.site_id, r.analyte)), r.fractions)
        out.append({"site_id": r.site_id, "site_name": session.site_name(r.site_id), "analyte": r.analyte,
                    "fractions": r.fractions, "n_results": int(r.n_results), "n_exceeds": int(r.n_exceeds),
                    "worst": label[r.worst], "worst_code": r.worst,
                    "latest_campaign": r.latest_campaign, "latest": label.get(r.latest, ""),
                    "latest_code": r.latest, "first_exceedance": _when(r.first_exceedance),
                    "last_exceedance": _when(r.last_exceedance),
                    "trend": f"{arrows} {words}".strip() if words else "trends not computed yet"
                    if trends is None else ""})
    return out
