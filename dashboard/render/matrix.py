"""The overview matrix and status badges as HTML (numbers from :mod:`dashboard.views.matrix`)."""

from __future__ import annotations

from html import escape
from urllib.parse import quote_plus

import numpy as np
from dash import html

from dashboard.state.session import SessionData
from dashboard.views.matrix import matrix_frame
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
            title = f"{site_id} · {a}: worst {vocabulary.LABEL[r.worst]}; {r.exceeds} of {r.n_results} results above a limit"
            # kept short (a thousand cells): the status is the cell's class, the line break a
            # newline (the link's white-space is pre-line)
            parts.append(
                f"<td class='cell status-{r.worst}' data-site='{e(site_id)}' data-analyte='{e(a)}'>"
                f"<a href='/site?site={q_site[site_id]}&amp;analyte={q_metal[a]}{tail}' title='{e(title)}'>"
                f"<b class='glyph'>{vocabulary.GLYPH[r.worst]}</b> {vocabulary.SHORT[r.worst]}\n{r.exceeds}/{r.n_results}</a></td>"
            )
        parts.append("</tr>")
    parts.append("</tbody></table>")
    return "".join(parts)
