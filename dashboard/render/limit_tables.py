"""The limit tables page body: each table with its citation and entries (rows from :mod:`dashboard.views.limits`).

The entries of a table are a small client grid (one component holding its rows), not an HTML table of a
component per cell: the page's first draw took 5-10 s in headless Chromium with the shipped tables
(about a thousand cells, each a component the browser's Dash renderer walks), about 1 s as grids.
"""

from __future__ import annotations

from dash import html

from dashboard.render.grid import Column, client_grid
from dashboard.state.session import SessionData
from dashboard.views.limits import entry_rows, sites_for_use
from tracescreen._internal.links import link_target

#: the columns of an entries grid (fields of :func:`dashboard.views.limits.entry_rows`)
ENTRY_GRID = [
    Column("analyte", "Metal", pinned=True, width=110), Column("fraction", "Fraction", width=100),
    Column("limit", "Limit", "words", width=330), Column("hardness_range", "Hardness range", width=170),
    Column("scope", "Scope", width=150), Column("duration", "Duration", width=100),
    Column("basis", "Basis", width=130), Column("effective_from", "In force from", width=130),
    Column("effective_to", "In force until", width=130), Column("note", "Note", "words", width=320),
]


def table_sections(session: SessionData) -> list:
    """One section per loaded limit table: citation, use, unit, entries, sites."""
    tables, entries = session.limits.tables, session.limits.entries
    out = []
    for i, t in enumerate(tables.to_dict("records")):
        tid = str(t.get("table_id"))
        ents = entries[entries["table_id"].astype(str) == tid]
        sites = sites_for_use(session, str(t.get("use")))
        if sites is None:
            applies = "every site (no sites file was given)"
        elif sites:
            applies = ", ".join(f"{s} ({session.site_name(s)})" for s in sites)
        else:
            applies = "no site lists this use"
        meta = [
            html.Dt("Source"), html.Dd(str(t.get("source", "")), className="citation"),
            html.Dt("Protects use"), html.Dd(str(t.get("use", ""))),
            html.Dt("Unit in the table"), html.Dd(str(t.get("unit", ""))),
            html.Dt("Applies to sites"), html.Dd(applies, className="applies"),
        ]
        if t.get("url"):  # a link only to http, https and mailto addresses; anything else as text
            target = link_target(t["url"])
            meta += [html.Dt("Link"), html.Dd(html.A(str(t["url"]), href=target, rel="noopener noreferrer")
                                              if target else f"{t['url']} (not a web address: shown as text)")]
        if t.get("notes"):
            meta += [html.Dt("Notes"), html.Dd(str(t["notes"]))]
        rows = entry_rows(ents)
        out.append(html.Section([
            html.H3(f"{tid} — {t.get('name', '')}"),
            html.Dl(meta, className="meta"),
            html.P(f"{len(rows)} entries", className="count-text"),
            client_grid(f"limit-entries-{i}", ENTRY_GRID, rows, page_size=10),
        ], className="limit-table", id=f"table-{tid}"))
    return out
