"""The report as one self-contained, printable HTML file: :func:`render_html` of a
:class:`~tracescreen.report.document.Document`.

No script and no outside request: charts are images inside the file (SVG; WebP for a dense chart) (``<img>`` elements with
data addresses, so a chart cannot run code). Every text of the document is escaped here.

Printing (the browser's print, or :mod:`tracescreen.report.pdf`): A4 pages with the caution and
"Page n of N" in the footer; every section starts a page; sections with wide tables print on
landscape pages; table headers repeat on every page, rows never split across pages, tables too wide
for a page are printed in parts that repeat the key columns (:func:`~tracescreen.report.document.column_parts`);
no scroll boxes in print.
"""

from __future__ import annotations

import base64
import html
import re

import numpy as np
import pandas as pd

from tracescreen import vocabulary
from tracescreen.report.document import Bullets, Document, Figure, Heading, Paragraph, Table, column_parts


def esc(text) -> str:
    """Text escaped for HTML (quotes too)."""
    return html.escape(str(text), quote=True)


_GLYPH_CSS = "".join(f".st-{s} .g{{color:{vocabulary.COLOUR[s]}}}" for s in vocabulary.STATUSES)
CSS = _GLYPH_CSS + """
:root{--ink:#1d2329;--muted:#57606a;--rule:#c9d1d9}
body{font-family:"DejaVu Sans",system-ui,-apple-system,"Segoe UI",sans-serif;margin:0 auto;max-width:1180px;
 padding:1rem 1.5rem;color:var(--ink);font-size:10.5pt;line-height:1.4}
h1{font-size:20pt;margin:.2rem 0 .6rem}h2{font-size:14pt;border-bottom:2px solid var(--rule);padding-bottom:.2rem;margin:1.6rem 0 .6rem}
h3{font-size:11.5pt;margin:1rem 0 .4rem}
.cover dl{display:grid;grid-template-columns:max-content 1fr;gap:.15rem 1rem;margin:.4rem 0 .8rem}
.cover dt{font-weight:bold}.cover dd{margin:0;white-space:pre-wrap}
.caution{border:3px solid #9a3412;background:#fff7ed;padding:.6rem .9rem;margin:.6rem 0;font-size:10.5pt}
.lead{margin:.35rem 0}.note{color:var(--muted);font-size:9.5pt}ul{margin:.3rem 0 .5rem 1.2rem;padding:0}
li{margin:.15rem 0}nav ul{columns:2;list-style:none;margin:.3rem 0 0 0}
.tablewrap{overflow-x:auto;margin:.4rem 0 .8rem}
table{border-collapse:collapse;font-size:8.5pt}caption{text-align:left;font-weight:bold;padding:.2rem 0}
th,td{border:1px solid var(--rule);padding:.15rem .35rem;text-align:left;vertical-align:top}
th{background:#f0f2f4}td.n{text-align:right;font-variant-numeric:tabular-nums}td.w{min-width:9em}.d{white-space:nowrap}
figure{margin:.6rem 0 1rem}figure img{max-width:100%;height:auto;display:block}
figcaption{font-size:9pt;color:var(--muted)}
@page{size:A4 portrait;margin:14mm 12mm 16mm 12mm;
 @bottom-left{content:"tracescreen site summary: a screening aid, not a compliance decision";font:8pt "DejaVu Sans",sans-serif;color:#57606a}
 @bottom-right{content:"Page " counter(page) " of " counter(pages);font:8pt "DejaVu Sans",sans-serif;color:#57606a}}
@page wide{size:A4 landscape;margin:12mm 12mm 14mm 12mm}
@media print{
 body{max-width:none;padding:0;font-size:9.5pt}
 section{break-before:page}section.landscape{page:wide}
 .tablewrap{overflow:visible}thead{display:table-header-group}tr,figure,li{break-inside:avoid}
 h2,h3,caption{break-after:avoid}nav{display:none}
 table{font-size:7.5pt;width:100%}th,td{overflow-wrap:break-word}
 figure img{width:100%;max-width:720px}
}
"""


#: Headers of text columns given room (a name or sentence squeezed to one word per line is unreadable).
WIDE_TEXT = frozenset({"Site name", "Name", "Detail", "Suggested action", "Note", "Source", "Reason", "Limit", "Value",
                       "Words"})
#: Headers of date columns (never broken inside a date).
DATES = frozenset({"Sampled", "First sampled", "Last sampled", "Trend line reaches the limit", "In force from",
                   "In force to"})


_DATE = re.compile(r"(\d{4}-\d{2}(?:-\d{2})?)")


def prose(text) -> str:
    """Text of a sentence, escaped, with its dates kept on one line."""
    return _DATE.sub(r'<span class="d">\1</span>', esc(text))


def _paragraph(b: Paragraph) -> str:
    if b.style == "caution":
        return f'<div class="caution" role="note"><b>Caution.</b> {esc(b.text)}</div>'
    return f'<p class="{esc(b.style)}">{prose(b.text)}</p>'


def _part_html(frame: pd.DataFrame, t: Table, caption: str) -> str:
    head = "".join(f"<th>{esc(c)}</th>" for c in frame.columns)
    cols = []
    for c in frame.columns:
        cls = "n" if c in t.numeric else "w" if c in WIDE_TEXT else "d" if c in DATES else ""
        text = frame[c].astype(str).map(esc).to_numpy(dtype=object)
        if t.status is not None and c in t.status.columns:
            st = t.status[c].astype(str).to_numpy(dtype=object)
            has = st != ""
            glyph = np.where(has, '<span class="g">' + frame[c].astype(str).str[:1].map(esc).to_numpy(dtype=object)
                             + "</span>" + frame[c].astype(str).str[1:].map(esc).to_numpy(dtype=object), text)
            cols.append(np.where(has, '<td class="st-' + st + '">', "<td>") + glyph + "</td>")
        else:
            cols.append((f'<td class="{cls}">' if cls else "<td>") + text + "</td>")
    body = "".join("<tr>" + "".join(r) + "</tr>\n" for r in np.stack(cols, axis=1)) if len(frame) else ""
    cap = f"<caption>{esc(caption)}</caption>" if caption else ""
    return f'<div class="tablewrap"><table>{cap}<thead><tr>{head}</tr></thead><tbody>\n{body}</tbody></table></div>'


def table_html(t: Table) -> str:
    """A table (in column parts when too wide), with its caption and the sentence on rows left out."""
    parts = column_parts(t)
    out = []
    for i, frame in enumerate(parts):
        caption = t.caption
        if len(parts) > 1:
            caption = f"{caption} (columns, part {i + 1} of {len(parts)})".strip()
        out.append(_part_html(frame, t, caption))
    html_ = "".join(out)
    html_ = html_.replace("<div class=\"tablewrap\"><table>", f'<div class="tablewrap"><table id="{esc(t.table_id)}">', 1)
    return html_ + (f'<p class="note">{esc(t.more)}</p>' if t.more else "")


def figure_html(f: Figure) -> str:
    """A chart as an image (SVG, or WebP when dense; drawn beforehand) with its caption."""
    fmt = f.page_format
    image = f.images.get(fmt)
    if image is None:
        return f'<p class="note">Chart {esc(f.caption)} was not drawn.</p>'
    data = base64.b64encode(image if isinstance(image, bytes) else image.encode("utf-8")).decode("ascii")
    mime = {"svg": "image/svg+xml", "png": "image/png", "webp": "image/webp"}[fmt]
    return (f'<figure id="{esc(f.figure_id)}"><img src="data:{mime};base64,{data}" width="{f.width}" '
            f'height="{f.height}" alt="{esc("Chart: " + f.caption)}"><figcaption>{esc(f.caption)}</figcaption></figure>')


def block_html(b) -> str:
    """One block of the document as HTML."""
    if isinstance(b, Paragraph):
        return _paragraph(b)
    if isinstance(b, Bullets):
        return "<ul>" + "".join(f"<li>{prose(i)}</li>" for i in b.items) + "</ul>"
    if isinstance(b, Heading):
        return f"<h3>{esc(b.text)}</h3>"
    if isinstance(b, Table):
        return table_html(b)
    if isinstance(b, Figure):
        return figure_html(b)
    raise TypeError(f"unknown block {type(b).__name__}")


def render_html(doc: Document) -> str:
    """The document as one self-contained HTML page (charts must be drawn as SVG first)."""
    cover = doc.cover
    rows = "".join(f"<dt>{esc(k)}</dt><dd>{esc(v)}</dd>" for k, v in cover.rows())
    summary = "".join(block_html(b) for b in doc.summary)
    numbered = doc.numbered()
    nav = "".join(f'<li><a href="#{esc(s.section_id)}">{esc(n)} {esc(s.title)}</a></li>' for n, s in numbered)
    sections = "".join(
        f'<section id="{esc(s.section_id)}"' + (' class="landscape"' if s.landscape else "") + ">"
        + f"<h2>{esc(n)} {esc(s.title)}</h2>\n" + "\n".join(block_html(b) for b in s.blocks) + "</section>\n"
        for n, s in numbered)
    return (
        '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{esc(cover.title)}</title><style>{CSS}</style></head><body>\n"
        f'<header class="cover" id="cover"><h1>{esc(cover.title)}</h1><dl>{rows}</dl>'
        f'<div class="caution" id="caution" role="note"><b>Caution.</b> {esc(doc.caution)}</div></header>\n'
        f'<div id="summary"><h2>Executive summary</h2>{summary}</div>\n'
        f'<nav aria-label="Contents"><h2>Contents</h2><ul>{nav}</ul></nav>\n{sections}</body></html>\n'
    )


def build_report_html(data, site_ids=None, title: str | None = None, options=None) -> str:
    """The report of a run as HTML: :func:`~tracescreen.report.build.build_document`, the charts
    drawn as SVG, :func:`render_html`. ``title`` replaces the cover's title."""
    from dataclasses import replace

    from tracescreen.report.build import ReportOptions, build_document
    from tracescreen.report.images import draw

    options = options or ReportOptions()
    if title:
        options = replace(options, cover=replace(options.cover, title=title))
    doc = build_document(data, site_ids, options)
    draw(doc.figures(), ("page",))
    return render_html(doc)
