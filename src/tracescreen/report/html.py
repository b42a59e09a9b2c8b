"""The site summary report as one self-contained HTML file.

``build_report_html(data)`` returns the HTML text of the tables of :mod:`tracescreen.report.tables`:
the caution first, then job and scope, limit tables with their full citations, the status matrix,
exceedances, per-metal charts, summaries, trends, the retest list, rejected rows and method notes.
plotly.js is inlined once, so the file opens without a network.
"""

from __future__ import annotations

import html

import numpy as np
import pandas as pd

from tracescreen import vocabulary
from tracescreen._internal.text import format_date, format_number
from tracescreen.caution import CAUTION
from tracescreen.report.figures import analyte_figures, figure_divs, plotly_script
from tracescreen.report.tables import STATUS_ORDER, ReportData, named_values, only_sites, report_tables, status_matrix

#: legend text: the status's glyph and label, as on the dashboard (tracescreen.vocabulary)
STATUS_TEXT = {s: f"{vocabulary.GLYPH[s]} {vocabulary.LABEL[s]}" for s in vocabulary.STATUSES}

SECTIONS = [
    ("scope", "Job and scope"),
    ("limits", "Limit tables used"),
    ("status", "Status matrix"),
    ("exceedances", "Exceedances"),
    ("charts", "Results by metal"),
    ("summaries", "Summaries"),
    ("trends", "Trends"),
    ("retest", "Retest list"),
    ("labqc", "Laboratory QC review"),
    ("rejected", "Rejected rows"),
    ("methods", "Method notes"),
]
"""Report sections: (element id, heading), in order."""

def _cells(col: pd.Series) -> pd.Series:
    """Display text of a column (numbers to 6 significant figures, dates ISO, HTML-escaped)."""
    if pd.api.types.is_bool_dtype(col):
        text = col.map({True: "yes", False: "no"}).fillna("")
    elif pd.api.types.is_numeric_dtype(col):
        text = format_number(col.astype(float), 6)
    elif pd.api.types.is_datetime64_any_dtype(col):
        text = format_date(col)
    else:
        text = col.fillna("").astype(str)
    return text.map(html.escape)


def table_html(df: pd.DataFrame, table_id: str, cell_class: pd.DataFrame | None = None) -> str:
    """An HTML table of ``df`` (escaped), with ``data-col`` attributes on cells."""
    if df.empty:
        return f'<p class="none" id="{table_id}">None.</p>'
    head = "".join(f"<th>{html.escape(str(c))}</th>" for c in df.columns)
    cols = []
    for j, c in enumerate(df.columns):
        attr = f' data-col="{html.escape(str(c), quote=True)}"'
        if cell_class is not None and c in cell_class.columns:
            cls = cell_class[c].fillna("").astype(str).to_numpy()
            cols.append("<td" + attr + ' class="' + cls.astype(object) + '">' + _cells(df[c]).to_numpy() + "</td>")
        else:
            cols.append(("<td" + attr + ">" + _cells(df[c]) + "</td>").to_numpy())
    body_rows = np.sum(np.stack(cols, axis=1).astype(object), axis=1) if cols else []
    body = "".join("<tr>" + r + "</tr>\n" for r in body_rows)
    return (f'<div class="scroll"><table id="{table_id}"><thead><tr>{head}</tr></thead>'
            f"<tbody>\n{body}</tbody></table></div>")


_STATUS_CSS = "".join(f".{s}{{background:{vocabulary.TINT[s]}}}" for s in vocabulary.STATUSES)
_CSS = _STATUS_CSS + """
body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;margin:0 auto;max-width:1200px;padding:1rem 1.5rem;color:#1d2329}
h1{font-size:1.6rem;margin:.3rem 0}h2{border-bottom:2px solid #d0d7de;padding-bottom:.2rem;margin-top:2.2rem}
.caution{border:3px solid #9a3412;background:#fff7ed;padding:.8rem 1rem;font-size:1.05rem;margin:.8rem 0}
nav a{margin-right:.9rem}table{border-collapse:collapse;font-size:.85rem;margin:.4rem 0}
th,td{border:1px solid #d0d7de;padding:.2rem .45rem;text-align:left;vertical-align:top}
th{background:#f3f4f6;position:sticky;top:0}.scroll{overflow:auto;max-height:34rem}
.citation{margin:.2rem 0 .8rem 1rem}
td[data-col=note],td[data-col=detail],td[data-col=suggested_action],td[data-col=source],td[data-col=value]{min-width:24rem}
.none{color:#57606a;font-style:italic}.legend span{padding:.1rem .4rem;margin-right:.4rem;border:1px solid #d0d7de}
"""


def _section(sid: str, title: str, body: str) -> str:
    return f'<section id="{sid}"><h2>{html.escape(title)}</h2>\n{body}\n</section>\n'


def _limits_html(tables: pd.DataFrame, entries: pd.DataFrame) -> str:
    if tables.empty:
        return '<p class="none">No limit table applied to these results.</p>'
    parts = []
    for _, t in tables.iterrows():  # one block per limit table (a handful)
        tid = str(t["table_id"])
        url = str(t.get("url", "") or "")
        link = f' <a href="{html.escape(url, quote=True)}">{html.escape(url)}</a>' if url and url != "nan" else ""
        notes = str(t.get("notes", "") or "")
        parts.append(
            f'<h3 id="limit-{html.escape(tid, quote=True)}">{html.escape(str(t["name"]))} ({html.escape(tid)})</h3>'
            f'<p class="citation"><b>Source:</b> {html.escape(str(t["source"]))}.{link}<br>'
            f'<b>Use protected:</b> {html.escape(str(t["use"]))}; table unit {html.escape(str(t.get("unit", "")))}'
            + (f"<br><b>Notes:</b> {html.escape(notes)}" if notes and notes != "nan" else "") + "</p>"
            + table_html(entries[entries["table_id"].eq(tid)].drop(columns="table_id"), f"entries-{tid}"))
    return "\n".join(parts)


def _matrix_html(matrix: pd.DataFrame) -> str:
    if matrix.empty:
        return '<p class="none">No site-sample results.</p>'
    classes = matrix.apply(lambda col: col.str.split(" ").str[0])
    legend = "".join(f'<span class="{s}">{html.escape(STATUS_TEXT[s])}</span>' for s in STATUS_ORDER)
    return f'<p class="legend">Worst status, k/n: {legend}</p>' + table_html(matrix.reset_index(), "status-matrix", classes)


def _lab_qc_html(data: ReportData) -> str:
    """The data review narrative of each batch, the QC values outside their windows, calibration fits."""
    if data.lab_qc_batches is None and data.calibration is None:
        return ('<p class="none">The files carry no laboratory QC rows and no calibration data was given: ask the '
                "laboratory for the QC summary of each batch (see <code>tracescreen labqc</code>).</p>")
    parts = []
    if data.lab_qc_batches is not None:
        parts.append("<h3>Data review narrative, by batch</h3>")
        parts += [f'<p class="narrative">{html.escape(str(t))}</p>' for t in data.lab_qc_batches["narrative"]]
        parts.append("<h3>QC values outside their windows or not judged</h3>")
        parts.append(table_html(data.lab_qc_verdicts, "labqc-verdicts-table") if len(data.lab_qc_verdicts)
                     else '<p class="none">Every QC value was judged and within its window.</p>')
    if data.calibration is not None:
        parts.append("<h3>Calibration</h3><p>Fits per analyte and run, with LOD = 3.3 σ / slope and "
                     "LOQ = 10 σ / slope (ICH Q2(R2)).</p>" + table_html(data.calibration, "calibration-table"))
    return "".join(parts)


def build_report_html(data: ReportData, site_ids=None, title: str | None = None) -> str:
    """The report as one self-contained HTML document (plotly.js inlined once; no network needed).

    Parameters
    ----------
    data : ReportData
    site_ids : list of str, optional
        Restrict to these sites.
    title : str, optional
        Page title (default names the sites).

    Returns
    -------
    str
        The HTML text.
    """
    tables = report_tables(data, site_ids)
    scr = only_sites(data.screening, site_ids)
    title = title or ("tracescreen site summary: " + (", ".join(site_ids) if site_ids else "all sites"))
    figures = analyte_figures(scr)
    summary_note = trend_note = ""
    if named_values(tables["summary"], "method"):
        summary_note = ("<p>Non-detect method: " + html.escape(named_values(tables["summary"], "method"))
                        + " (column <code>method</code>)"
                        + ("; upper confidence limit on the mean: " + html.escape(named_values(tables["summary"], "ucl_method"))
                           if named_values(tables["summary"], "ucl_method") else "") + ".</p>")
    if named_values(tables["trends"], "test"):
        trend_note = ("<p>Test used: " + html.escape(named_values(tables["trends"], "test")) + " (column <code>test</code>)"
                      + ("; slope: " + html.escape(named_values(tables["trends"], "slope_method"))
                         if named_values(tables["trends"], "slope_method") else "")
                      + ". Dates where a trend line reaches a limit are extrapolations: an indication only.</p>")
    bodies = {
        "scope": table_html(tables["scope"], "scope-table") + "<h3>Files read</h3>"
                 + table_html(tables["files"], "files-table"),
        "limits": _limits_html(tables["limit_tables"], tables["limit_entries"]),
        "status": _matrix_html(status_matrix(scr)),
        "exceedances": table_html(tables["exceedances"], "exceedances-table"),
        "charts": figure_divs(figures) if figures else '<p class="none">No site-sample results to plot.</p>',
        "summaries": summary_note + (table_html(tables["summary"], "summary-table") if data.summary is not None
                                     else '<p class="none">Summaries were not computed for this run.</p>')
                     + ("<h3>Results above each limit</h3><p>Count and proportion of results above each "
                        "applicable limit, with a 95 % binomial (Clopper-Pearson) interval; non-detects with "
                        "a detection limit above the limit are counted as undecided.</p>"
                        + table_html(tables["exceedance_rates"], "exceedance-rates-table")
                        if data.exceedance_rates is not None else ""),
        "trends": trend_note + (table_html(tables["trends"], "trends-table") if data.trends is not None
                                else '<p class="none">Trends were not computed for this run.</p>'),
        "retest": table_html(tables["retest"], "retest-table"),
        "labqc": _lab_qc_html(data),
        "rejected": table_html(tables["rejected"], "rejected-table"),
        "methods": table_html(tables["method_notes"], "methods-table"),
    }
    order = SECTIONS
    if data.wells is not None:  # wells against background and standards, before the method notes
        from tracescreen.report.wells import wells_section_html

        bodies["wells"] = wells_section_html(data.wells, site_ids, table_html)
        order = SECTIONS[:-1] + [("wells", "Wells against background and standards")] + SECTIONS[-1:]
    nav = "".join(f'<a href="#{sid}">{html.escape(t)}</a>' for sid, t in order)
    sections = "".join(_section(sid, t, bodies[sid]) for sid, t in order)
    return (
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
        f"<title>{html.escape(title)}</title><style>{_CSS}</style>"
        f"<script>{plotly_script()}</script></head><body>\n"
        f"<h1>{html.escape(title)}</h1>\n"
        f'<div class="caution" id="caution" role="note"><b>Caution.</b> {html.escape(CAUTION)}</div>\n'
        f"<nav>{nav}</nav>\n{sections}</body></html>\n"
    )
