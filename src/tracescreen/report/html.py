"""The site summary report: one self-contained HTML file (and optionally a workbook).

``report_tables(data)`` builds every table of the report (the same tables go to the HTML page and,
one sheet each, to the workbook); ``build_report_html(data)`` returns the HTML text: the caution
first, then job and scope, limit tables with their full citations, the status matrix, exceedances,
per-metal charts, summaries, trends, the retest list, rejected rows and method notes. plotly.js is
inlined once, so the file opens without a network.
"""

from __future__ import annotations

import html
from dataclasses import dataclass, field
from datetime import datetime, timezone

import numpy as np
import pandas as pd

from tracescreen._internal.frames import plain_text
from tracescreen import __version__, vocabulary
from tracescreen.caution import CAUTION
from tracescreen._internal.text import format_date, format_number
from tracescreen.retest.rows import site_samples
from tracescreen.report.figures import analyte_figures, figure_divs, plotly_script

STATUS_ORDER = list(vocabulary.RANKED)
"""Statuses from worst to least concern (a result's status in the matrix is its worst)."""

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
    ("rejected", "Rejected rows"),
    ("methods", "Method notes"),
]
"""Report sections: (element id, heading), in order."""

EXCEEDANCE_COLUMNS = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit",
                      "value_ug_L", "limit_ug_L", "ratio", "limit_table", "use", "duration", "source"]


@dataclass
class ReportData:
    """Everything a report shows.

    Attributes
    ----------
    screening : pandas.DataFrame
        Screening table (DEVELOPERS.md contract), QC rows included.
    rejected : pandas.DataFrame
        Rejected rows (``file, sheet, row, reason`` plus original cells).
    files : pandas.DataFrame
        One row per file read, with ``file`` and ``sha256``.
    limit_tables, limit_entries : pandas.DataFrame
        ``LimitSet.tables`` and ``LimitSet.entries``.
    retest : pandas.DataFrame
        Retest list (``tracescreen.retest.listing.retest_list``).
    summary, trends, exceedance_rates : pandas.DataFrame or None
        Outputs of the statistics modules (``summary.csv``, ``trends.csv``, ``exceedances.csv``:
        count and proportion of results above each limit with a binomial interval).
    sites : pandas.DataFrame or None
        Sites table, if one was given.
    settings : dict
        Settings shown in the scope section (e.g. non-detect method, trend test options).
    method_notes : list of str
        Extra method notes (e.g. from the statistics modules).
    """

    screening: pd.DataFrame
    rejected: pd.DataFrame
    files: pd.DataFrame
    limit_tables: pd.DataFrame
    limit_entries: pd.DataFrame
    retest: pd.DataFrame
    summary: pd.DataFrame | None = None
    trends: pd.DataFrame | None = None
    exceedance_rates: pd.DataFrame | None = None
    sites: pd.DataFrame | None = None
    settings: dict = field(default_factory=dict)
    method_notes: list = field(default_factory=list)

    def __post_init__(self):
        # the engine's tables hold text as categoricals; the report builds text from them
        self.screening = plain_text(self.screening)


# ----------------------------------------------------------------------------- tables
def _only_sites(frame: pd.DataFrame | None, site_ids) -> pd.DataFrame | None:
    if frame is None or site_ids is None or "site_id" not in frame.columns:
        return frame
    return frame[frame["site_id"].isin(list(site_ids))]


def result_status(screening: pd.DataFrame) -> pd.DataFrame:
    """One row per site-sample result with its worst status over all its limits.

    Parameters
    ----------
    screening : pandas.DataFrame

    Returns
    -------
    pandas.DataFrame
        ``site_id, analyte, fraction, sampled_at, status`` (+ provenance) for each result.
    """
    site = site_samples(screening)
    rank = pd.Categorical(site["status"], categories=STATUS_ORDER, ordered=True)
    key = [c for c in ("file", "sheet", "row") if c in site.columns]
    worst = site.assign(_rank=rank.codes).sort_values("_rank", kind="stable")
    return worst.drop_duplicates(key).drop(columns="_rank")


def status_matrix(screening: pd.DataFrame) -> pd.DataFrame:
    """Site × analyte (fraction) matrix of the worst status, with counts.

    Each cell reads ``<worst status> k/n``: ``n`` site-sample results of that site, analyte and
    fraction, ``k`` of them with that worst status (over all their applicable limits).

    Returns
    -------
    pandas.DataFrame
        Index ``site_id``; one column per ``analyte (fraction)``; empty string where no results.
    """
    res = result_status(screening)
    if res.empty:
        return pd.DataFrame()
    res = res.assign(series=res["analyte"] + " (" + res["fraction"] + ")")
    n = res.groupby(["site_id", "series"]).size().rename("n")
    codes = pd.Categorical(res["status"], categories=STATUS_ORDER, ordered=True).codes
    worst = res.assign(_c=codes).groupby(["site_id", "series"])["_c"].min().rename("_c")
    k = (res.assign(_c=codes).merge(worst.reset_index(), on=["site_id", "series", "_c"])
         .groupby(["site_id", "series"]).size().rename("k"))
    cells = pd.concat([n, worst, k], axis=1).reset_index()
    cells["text"] = (np.asarray(STATUS_ORDER, dtype=object)[cells["_c"].to_numpy()] + " "
                     + cells["k"].astype(str) + "/" + cells["n"].astype(str))
    return cells.pivot(index="site_id", columns="series", values="text").fillna("")


def exceedances(screening: pd.DataFrame) -> pd.DataFrame:
    """Every (result, limit) pair with status ``exceeds``, worst ratio first within a site."""
    exc = site_samples(screening)
    exc = exc[exc["status"].eq("exceeds")]
    cols = [c for c in EXCEEDANCE_COLUMNS if c in exc.columns]
    return exc.sort_values(["site_id", "analyte", "sampled_at", "ratio"], ascending=[True, True, True, False])[cols]


def scope_table(data: ReportData, screening: pd.DataFrame, site_ids) -> pd.DataFrame:
    """Job and scope as ``item, value`` rows."""
    site = site_samples(screening)
    res = result_status(screening)
    key = [c for c in ("file", "sheet", "row") if c in screening.columns]
    all_results = screening.drop_duplicates(key) if key else screening
    dates = site["sampled_at"]
    quarters = dates.dt.to_period("Q").drop_duplicates().sort_values()
    sites = sorted(site["site_id"].unique())
    rows = [
        ("generated", datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC") + f" by tracescreen {__version__}"),
        ("sites", f"{len(sites)}: " + ", ".join(sites) if site_ids is None
         else f"{len(sites)} selected: " + ", ".join(sites)),
        ("period", f"{format_date(pd.Series([dates.min()]))[0]} to {format_date(pd.Series([dates.max()]))[0]}"
         if len(dates) else "no results"),
        ("campaigns", f"{dates.dt.normalize().nunique()} sampling dates in {len(quarters)} calendar quarters"
         + (f" ({quarters.iloc[0]} to {quarters.iloc[-1]})" if len(quarters) else "")),
        ("analytes", ", ".join(sorted(site["analyte"].unique()))),
        ("site-sample results", str(len(res))),
        ("QC results (blanks, field duplicates; not screened against limits)",
         str(int((~all_results["sample_type"].eq("sample")).sum())) if "sample_type" in all_results else "0"),
        ("rejected rows (all files)", str(len(data.rejected))),
        ("limit tables", ", ".join(sorted(screening["limit_table"].dropna().astype(str).replace("", np.nan)
                                          .dropna().unique()))),
    ]
    rows += [(str(k), str(v)) for k, v in data.settings.items()]
    return pd.DataFrame(rows, columns=["item", "value"])


def files_table(files: pd.DataFrame) -> pd.DataFrame:
    """Files read with their SHA-256 checksums (path columns dropped: the report may travel)."""
    cols = [c for c in files.columns if c != "path"]
    return files[cols].reset_index(drop=True)


def limit_tables_used(data: ReportData, screening: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The limit tables that apply to the screened results, and their entries.

    Returns
    -------
    (tables, entries) : tuple of pandas.DataFrame
        ``entries`` has a ``limit`` column with the value in µg/L or the hardness formula.
    """
    used = set(screening["limit_table"].dropna().astype(str))
    tables = data.limit_tables[data.limit_tables["table_id"].isin(used)]
    tables = tables[[c for c in ("table_id", "name", "source", "url", "use", "unit", "notes")
                     if c in tables.columns]].reset_index(drop=True)
    ent = data.limit_entries[data.limit_entries["table_id"].isin(used)].copy()
    value = "value_ug_L" in ent.columns and ent["value_ug_L"].notna()
    formula = pd.Series("", index=ent.index, dtype=object)
    if "hf_m" in ent.columns:
        cf = format_number(ent["hf_cf"]) if "hf_cf" in ent.columns else pd.Series("", index=ent.index)
        if "hf_cf_intercept" in ent.columns:
            cf = cf.where(cf.ne(""), "(" + format_number(ent["hf_cf_intercept"], 7) + " + "
                          + format_number(ent["hf_cf_ln_slope"], 7) + "·ln H)")
        formula = ("exp(" + format_number(ent["hf_m"], 5) + "·ln H + " + format_number(ent["hf_b"], 5)
                   + ") × " + cf + " [H: hardness mg/L CaCO3")
        if "hardness_min" in ent.columns:
            formula = formula + np.where(ent["hardness_min"].notna() | ent["hardness_max"].notna(),
                                         ", bounded " + format_number(ent["hardness_min"]) + " to "
                                         + format_number(ent["hardness_max"]), "")
        formula = formula + "]"
    ent["limit"] = np.where(value, format_number(ent["value_ug_L"], 6) + " µg/L", formula)
    cols = [c for c in ("table_id", "analyte", "fraction", "limit", "duration", "basis",
                        "effective_from", "effective_to", "note") if c in ent.columns]
    return tables, ent[cols].reset_index(drop=True)


def _named(frame: pd.DataFrame | None, column: str) -> str:
    """The distinct values of a text column, comma-separated ("" if absent)."""
    if frame is None or column not in frame.columns:
        return ""
    return ", ".join(sorted(set(frame[column].dropna().astype(str)) - {""}))


def method_notes(data: ReportData) -> pd.DataFrame:
    """Method notes as ``topic, note`` rows."""
    notes = [
        ("caution", CAUTION),
        ("units", "All concentrations are in µg/L, converted from the reported units with pint "
                  "(ppb taken as µg/L for water)."),
        ("statuses", "exceeds: detected and above the limit; meets: detected and at or below it; "
                     "nondetect_meets: not detected at a detection limit at or below the limit; "
                     "nondetect_inconclusive: not detected, but the detection limit is above the limit, so "
                     "nothing is decided; above_range_inconclusive: reported above the calibrated range "
                     "(>x) with x at or below the limit, so nothing is decided (a >x with x above the "
                     "limit exceeds); no_limit: no applicable limit (see the note column). A non-detect "
                     "is neither zero nor an exceedance."),
        ("status matrix", "Each cell gives the worst status of the site-sample results of that site, "
                          "analyte and fraction over all applicable limits, as k/n: k results of n with that "
                          "worst status."),
        ("QC samples", "Field blanks, lab blanks and field duplicates are QC samples (status qc_sample): "
                       "they are not screened against limits, not counted in the matrix, exceedances, "
                       "charts or summaries; they enter the retest list through the QC checks."),
        ("limits", "Each result is compared with every entry of the limit tables for the site's water "
                   "uses, same analyte and fraction, in force on the sampling date; hardness-dependent "
                   "entries use the sample's hardness (own value, else Standard Methods 2340 B from "
                   "calcium and magnesium, else the site default)."),
        ("charts", "Filled markers: detected results; open downward triangles: non-detects plotted at "
                   "their detection limit; lines: limits (dotted markers where the limit varies with "
                   "hardness)."),
    ]
    if _named(data.summary, "method"):
        notes.append(("summaries", "Non-detect method(s) used in the summaries: " + _named(data.summary, "method")
                      + ("; upper confidence limit on the mean: " + _named(data.summary, "ucl_method")
                         if _named(data.summary, "ucl_method") else "") + "."))
    if _named(data.trends, "test"):
        notes.append(("trends", "Trend test(s) used: " + _named(data.trends, "test") + ". A date where a trend "
                                "line crosses a limit is an extrapolation, shown as an indication only."))
    notes.append(("retest reasons", "first_exceedance, above_range (dilute and reanalyse), dl_too_high, near_limit, uncertainty_straddles_limit "
                                    "(Eurachem/CITAC guide on uncertainty in compliance assessment), "
                                    "history_outlier (modified z-score, Iglewicz & Hoaglin 1993), "
                                    "duplicate_disagrees, blank_contamination, dissolved_exceeds_total, "
                                    "holding_time_exceeded (40 CFR 136.3 Table II); see the detail column."))
    notes += [("note", str(n)) for n in data.method_notes]
    return pd.DataFrame(notes, columns=["topic", "note"])


def report_data(loaded, limits, screened: pd.DataFrame, *, input_files: pd.DataFrame | None = None,
                sites: pd.DataFrame | None = None, retest_options=None, statistics: dict | None = None,
                settings: dict | None = None) -> ReportData:
    """Assemble a :class:`ReportData` from a loading result, the limit set and the screening table.

    Parameters
    ----------
    loaded : tracescreen.io.loading.LoadResult
        Accepted and rejected rows and the files read.
    limits : tracescreen.limits.load.LimitSet
    screened : pandas.DataFrame
        ``screening.screen(loaded.accepted, limits, sites)``.
    input_files : pandas.DataFrame, optional
        Every input file with ``sha256`` (results, limit tables, sites); default the lab files of
        ``loaded.files``. Row counts of ``loaded.files`` are added.
    sites : pandas.DataFrame, optional
    retest_options : tracescreen.retest.listing.RetestOptions, optional
    statistics : dict, optional
        ``summary``, ``exceedances`` (rates per limit), ``trends`` tables and ``notes`` (list of
        str); computed with each function's defaults when not given.
    settings : dict, optional
        Extra settings for the scope table (the retest thresholds are always listed).

    Returns
    -------
    ReportData
    """
    from tracescreen.retest.listing import RetestOptions, retest_list
    from tracescreen.statistics.summary import exceedance_rates, summarise
    from tracescreen.statistics.trends import lowest_limits, trend_table

    options = retest_options or RetestOptions()
    if statistics is None:
        statistics = {"summary": summarise(loaded.accepted), "exceedances": exceedance_rates(screened),
                      "trends": trend_table(loaded.accepted, limits=lowest_limits(screened)), "notes": []}
    files = loaded.files if input_files is None else input_files
    counts = [c for c in ("rows_read", "accepted", "rejected") if c in loaded.files.columns]
    if input_files is not None and counts and len(loaded.files):
        files = files.merge(loaded.files[["file", "sheet"] + counts], on=["file", "sheet"], how="left")
    return ReportData(
        screening=screened, rejected=loaded.rejected, files=files, limit_tables=limits.tables,
        limit_entries=limits.entries, retest=retest_list(screened, options),
        summary=statistics.get("summary"), trends=statistics.get("trends"),
        exceedance_rates=statistics.get("exceedances"), sites=sites,
        settings={**(settings or {}), **options.describe()}, method_notes=list(statistics.get("notes", [])))


def report_tables(data: ReportData, site_ids=None) -> dict[str, pd.DataFrame]:
    """Every table of the report, by name, in report order (one workbook sheet each).

    Parameters
    ----------
    data : ReportData
    site_ids : list of str, optional
        Restrict to these sites (rejected rows and files always cover the whole job).

    Returns
    -------
    dict of str to pandas.DataFrame
        ``caution, scope, files, limit_tables, limit_entries, status_matrix, exceedances, summary,
        exceedance_rates, trends, retest, rejected, method_notes``.
    """
    scr = _only_sites(data.screening, site_ids)
    tables, entries = limit_tables_used(data, scr)
    empty = pd.DataFrame()
    return {
        "caution": pd.DataFrame({"caution": [CAUTION]}),
        "scope": scope_table(data, scr, site_ids),
        "files": files_table(data.files),
        "limit_tables": tables,
        "limit_entries": entries,
        "status_matrix": status_matrix(scr).reset_index(),
        "exceedances": exceedances(scr).reset_index(drop=True),
        "summary": (_only_sites(data.summary, site_ids) if data.summary is not None else empty).reset_index(drop=True),
        "exceedance_rates": (_only_sites(data.exceedance_rates, site_ids) if data.exceedance_rates is not None
                             else empty).reset_index(drop=True),
        "trends": (_only_sites(data.trends, site_ids) if data.trends is not None else empty).reset_index(drop=True),
        "retest": _only_sites(data.retest, site_ids).reset_index(drop=True),
        "rejected": data.rejected.reset_index(drop=True),
        "method_notes": method_notes(data),
    }


# ----------------------------------------------------------------------------- HTML
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
    scr = _only_sites(data.screening, site_ids)
    title = title or ("tracescreen site summary: " + (", ".join(site_ids) if site_ids else "all sites"))
    figures = analyte_figures(scr)
    summary_note = trend_note = ""
    if _named(tables["summary"], "method"):
        summary_note = ("<p>Non-detect method: " + html.escape(_named(tables["summary"], "method"))
                        + " (column <code>method</code>)"
                        + ("; upper confidence limit on the mean: " + html.escape(_named(tables["summary"], "ucl_method"))
                           if _named(tables["summary"], "ucl_method") else "") + ".</p>")
    if _named(tables["trends"], "test"):
        trend_note = ("<p>Test used: " + html.escape(_named(tables["trends"], "test")) + " (column <code>test</code>)"
                      + ("; slope: " + html.escape(_named(tables["trends"], "slope_method"))
                         if _named(tables["trends"], "slope_method") else "")
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
        "rejected": table_html(tables["rejected"], "rejected-table"),
        "methods": table_html(tables["method_notes"], "methods-table"),
    }
    nav = "".join(f'<a href="#{sid}">{html.escape(t)}</a>' for sid, t in SECTIONS)
    sections = "".join(_section(sid, t, bodies[sid]) for sid, t in SECTIONS)
    return (
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
        f"<title>{html.escape(title)}</title><style>{_CSS}</style>"
        f"<script>{plotly_script()}</script></head><body>\n"
        f"<h1>{html.escape(title)}</h1>\n"
        f'<div class="caution" id="caution" role="note"><b>Caution.</b> {html.escape(CAUTION)}</div>\n'
        f"<nav>{nav}</nav>\n{sections}</body></html>\n"
    )
