"""The limit tables page body: each table with its citation and entries (rows from :mod:`dashboard.views.limits`)."""

from __future__ import annotations

from dash import html

from dashboard.state.session import SessionData
from dashboard.views.limits import ENTRY_COLUMNS, entry_rows, sites_for_use
from tracescreen._internal.links import link_target


def table_sections(session: SessionData) -> list:
    """One section per loaded limit table: citation, use, unit, entries, sites."""
    tables, entries = session.limits.tables, session.limits.entries
    out = []
    for t in tables.to_dict("records"):
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
            html.Details([
                html.Summary(f"{len(rows)} entries"),
                html.Table([html.Thead(html.Tr([html.Th(c) for c in ENTRY_COLUMNS])),
                            html.Tbody([html.Tr([html.Td(r[c]) for c in ENTRY_COLUMNS]) for r in rows])],
                           className="plain"),
            ], open=len(rows) <= 40),
        ], className="limit-table", id=f"table-{tid}"))
    return out
