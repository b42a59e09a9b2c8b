"""The report's content, built once from a run: :func:`build_document` -> :class:`~tracescreen.report.document.Document`.

Order (what a reader needs first comes first): first page (cover, caution, executive summary);
1 site–metal grid; 2 exceedances (one row per result, its limits side by side); 3 undecided
results; 4 trends; 5 summary statistics; 6 charts; 7 confirmatory retest list; laboratory QC and wells against background
where the run has them; then the appendices: statistical design, limit tables with full citations,
data received (files, checksums, rejected rows), codes and words, method notes
(:mod:`tracescreen.report.appendices`). Long tables are cut at :attr:`ReportOptions.max_rows` in
the document (the workbook holds every row) with a sentence saying so.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd

from tracescreen import vocabulary
from tracescreen.caution import CAUTION
from tracescreen.report import findings
from tracescreen.report.cover import Cover
from tracescreen.report.document import Bullets, Document, Heading, Paragraph, Section, Table
from tracescreen.report.tables import ReportData, only_sites
from tracescreen.report.words import in_words, numeric_headers


@dataclass(frozen=True)
class ReportOptions:
    """What the document shows.

    Attributes
    ----------
    cover : Cover
        The first page's fields.
    charts : str
        ``"findings"`` (series with an exceedance or a rising trend toward a limit), ``"all"`` or ``"none"``.
    max_panels : int
        Chart panels drawn at most (series with findings first; the rest are named).
    max_rows : int
        Rows of a long table in the document (every row is in the workbook).
    """

    cover: Cover = field(default_factory=Cover)
    charts: str = "findings"
    max_panels: int = 96
    max_rows: int = 1000


@dataclass
class Context:
    """What every section builder reads: the run's tables restricted to the chosen sites."""

    data: ReportData
    screening: pd.DataFrame
    refs: pd.DataFrame
    site_ids: list | None
    options: ReportOptions


def cut(frame: pd.DataFrame, max_rows: int, where: str) -> tuple[pd.DataFrame, str]:
    """The first ``max_rows`` rows and a sentence saying where the rest are ("" when none is left out)."""
    if len(frame) <= max_rows:
        return frame, ""
    return frame.head(max_rows), (f"The first {max_rows:,} of {len(frame):,} rows are shown; every row is in {where}.")


def _names(ctx: Context) -> pd.Series:
    sites = ctx.data.sites
    return dict(zip(sites["site_id"].astype(str), sites["name"].fillna("").astype(str))) if sites is not None else {}


def once_per_site(frame: pd.DataFrame, column: str = "Site name") -> pd.DataFrame:
    """``frame`` (sorted by site) with ``column`` blank where the row above is of the same site: a
    printed table names each site once per run of its rows."""
    if column not in frame.columns or frame.empty:
        return frame
    same = frame.iloc[:, 0].eq(frame.iloc[:, 0].shift())
    return frame.assign(**{column: frame[column].where(~same, "")})


def _with_names(frame: pd.DataFrame, ctx: Context) -> pd.DataFrame:
    """``frame`` with ``site_name`` after ``site_id``."""
    if "site_id" not in frame.columns or "site_name" in frame.columns:
        return frame
    out = frame.copy()
    out.insert(list(out.columns).index("site_id") + 1, "site_name", out["site_id"].astype(str).map(_names(ctx)).fillna(""))
    return out


def ref_note(refs: pd.DataFrame) -> Paragraph:
    """The key of the references [k] used in tables and charts."""
    return Paragraph("Limit tables: " + "; ".join(f"[{r.ref}] {r.short_name}" for r in refs.itertuples())
                     + " (full citations in the appendix).", "note")


def grid_section(ctx: Context) -> Section:
    """1: the site–metal grid (glyph + word + count)."""
    cells, status = findings.site_metal_grid(ctx.screening, ctx.data.sites)
    legend = [f"{vocabulary.GLYPH[s]} {vocabulary.SHORT[s]}: {vocabulary.LABEL[s]}" for s in vocabulary.RANKED]
    blocks = [Paragraph("Each cell gives the worst status of the site's results of that metal over every limit that "
                        "applies, as a shape, a word and k/n: k of the n results have that worst status. Shapes and "
                        "words carry the meaning; colour only repeats it."), Bullets(legend)]
    if cells.empty:
        blocks.append(Paragraph("No site-sample results.", "note"))
    else:
        blocks.append(Table(cells, "site-metal-grid", "Site–metal grid", key_columns=2, max_columns=8,
                            status=status))
    return Section("grid", "Site–metal grid", blocks)


def exceedance_section(ctx: Context) -> Section:
    """2: every result above a limit, one row per result with its limits side by side."""
    rows, _ = findings.exceedance_rows(ctx.screening, ctx.data.limit_entries, ctx.refs, ctx.data.sites,
                                       max_results=ctx.options.max_rows)
    total = rows.attrs.get("total", len(rows))
    blocks = [Paragraph(f"{total:,} results exceed at least one limit. Each row is one result with every limit "
                        f"that applies to it, in µg/L; {findings.EXCEEDED_MARK} marks a limit the result exceeds. "
                        "A period limit (running annual mean, percentile) is judged on its period value, shown in "
                        "brackets after the limit. The hardness used is shown where a limit depends on it; '–' means the limit does not "
                        "apply to that result.")]
    if rows.empty:
        return Section("exceedances", "Exceedances", blocks + [Paragraph("No result exceeds a limit.", "note")])
    shown, more = rows, (f"The first {len(rows):,} of {total:,} results are shown; every one is in the workbook "
                         "(sheet exceedances)." if total > len(rows) else "")
    if not (shown["hardness_used_mg_L"] != "").any():
        shown = shown.drop(columns="hardness_used_mg_L")
    frame = once_per_site(in_words(shown))
    numeric = tuple(c for c in frame.columns if c.startswith("[") or c in ("Value (µg/L)", "Hardness used (mg/L as CaCO₃)"))
    blocks += [Table(frame, "exceedances-table", "Results above a limit", key_columns=4, max_columns=18,
                     numeric=numeric, more=more), ref_note(ctx.refs)]
    return Section("exceedances", "Exceedances", blocks, landscape=True)


def undecided_section(ctx: Context) -> Section:
    """3: results that decide nothing (detection limit above the limit, above the calibrated range)."""
    u = findings.undecided(ctx.screening, ctx.data.sites)
    blocks = [Paragraph("A non-detect whose detection limit is above the limit cannot show that the limit is met, and "
                        "is not an exceedance either; a result above the calibrated range at or below the limit cannot "
                        "decide. These need a lower detection limit or a dilution and reanalysis.")]
    if u.empty:
        return Section("undecided", "Undecided results", blocks + [Paragraph("No result is undecided.", "note")])
    u = u.rename(columns={"limit_min_ug_L": "lowest_limit_ug_L"})
    return Section("undecided", "Undecided results", blocks + [Table(in_words(u), "undecided-table", key_columns=2,
                                                                     numeric=numeric_headers(u))])


TREND_COLUMNS = ["site_id", "site_name", "analyte", "fraction", "n", "n_nondetect", "first_sampled", "last_sampled",
                 "test", "p_value", "slope_per_year", "slope_low", "slope_high", "direction", "lowest_limit_ug_L",
                 "crosses_limit_on"]


def trend_section(ctx: Context) -> Section:
    """4: series with a statistically significant trend (every series is in the workbook)."""
    t = only_sites(ctx.data.trends, ctx.site_ids)
    if t is None:
        return Section("trends", "Trends", [Paragraph("Trends were not computed for this run.", "note")])
    sig = _with_names(t[t["direction"].astype(str) != "no_trend"], ctx)
    blocks = [Paragraph(f"Of {len(t):,} series tested, {len(sig):,} show a statistically significant trend; the others "
                        "show none at the chosen alpha (Appendix A). Where a rising trend line reaches the lowest "
                        "applicable limit, the date is an extrapolation: an indication only.")]
    if len(sig):
        shown, more = cut(sig.sort_values(["direction", "crosses_limit_on", "site_id"]), ctx.options.max_rows,
                          "the workbook (sheet trends)")
        shown = shown[[c for c in TREND_COLUMNS if c in shown.columns]]
        blocks.append(Table(in_words(shown), "trends-table", key_columns=4, max_columns=16, more=more,
                            numeric=numeric_headers(shown)))
    return Section("trends", "Trends", blocks, landscape=True)


SUMMARY_COLUMNS = ["site_id", "site_name", "analyte", "fraction", "n", "percent_nondetect", "min_detected",
                   "max_detected", "max_detection_limit", "mean", "median", "p95", "ucl95_mean", "method"]


def statistics_section(ctx: Context) -> Section:
    """Summary statistics of the series with findings (every series with ``charts="all"``; all in the workbook)."""
    from tracescreen.report.charts import SERIES, chart_series

    s = only_sites(ctx.data.summary, ctx.site_ids)
    if s is None:
        return Section("summaries", "Summary statistics", [Paragraph("Summaries were not computed for this run.", "note")])
    which = "all" if ctx.options.charts == "all" else "findings"
    keep = chart_series(ctx.screening, only_sites(ctx.data.trends, ctx.site_ids), which)
    s = s.merge(keep, on=SERIES) if len(keep) else s.iloc[:0]
    blocks = [Paragraph(f"Statistics of the {len(s):,} series " + ("" if which == "all" else "with findings ")
                        + "in µg/L; non-detects by the method named (Appendix A), never as zero. The workbook (sheet "
                        "summary) has every series.")]
    if len(s):
        shown, more = cut(_with_names(s, ctx), ctx.options.max_rows, "the workbook (sheet summary)")
        shown = shown[[c for c in SUMMARY_COLUMNS if c in shown.columns]]
        blocks.append(Table(in_words(shown), "summary-table", key_columns=4, max_columns=14, more=more,
                            numeric=numeric_headers(shown)))
    return Section("summaries", "Summary statistics", blocks, landscape=True)


def chart_section(ctx: Context) -> Section:
    """5: small multiples per metal for the series with findings (or all)."""
    from tracescreen.report.charts import chart_series, metal_figures

    which = ctx.options.charts
    series = chart_series(ctx.screening, only_sites(ctx.data.trends, ctx.site_ids), which)
    left = series.iloc[ctx.options.max_panels:]
    series = series.iloc[:ctx.options.max_panels]
    what = {"findings": "the site–metal series with a finding (an exceedance, or a rising trend toward a limit)",
            "all": "every site–metal series"}.get(which, "")
    blocks = [Paragraph(f"Charts of {what}: one panel per site, on the same axes for one metal. Shapes as in the grid: "
                        f"{vocabulary.GLYPH['exceeds']} above a limit, {vocabulary.GLYPH['meets']} detected within, open "
                        "shapes are non-detects drawn at their detection limit. Dashed lines are limits, labelled with "
                        "their value and table [k]; bars mark a limit computed for each sample from its hardness; "
                        "dotted lines are period values (running annual means, percentiles).")] if what else []
    figures = metal_figures(ctx.screening, series, ctx.data.limit_entries, ctx.refs, ctx.data.sites) if len(series) else []
    blocks += figures or [Paragraph("No chart: " + ("charts were not asked for." if which == "none"
                                                      else "no series has a finding."), "note")]
    if len(left):
        blocks.append(Paragraph(f"{len(left):,} further series are not drawn (at most {ctx.options.max_panels} panels): "
                                + ", ".join(" ".join(r) for r in left.head(40).itertuples(index=False))
                                + (" …" if len(left) > 40 else "") + ".", "note"))
    if figures:
        blocks.append(ref_note(ctx.refs))
    return Section("charts", "Charts", blocks)


RETEST_COLUMNS = ["site_id", "site_name", "sample_id", "sampled_at", "analyte", "fraction", "reason", "detail",
                  "suggested_action"]


def retest_section(ctx: Context) -> Section:
    """7: results flagged for a confirmatory retest or review; batches without their QC summary by batch."""
    from tracescreen.report.summary import documents_only

    r = _with_names(only_sites(ctx.data.retest, ctx.site_ids), ctx)
    blocks = [Paragraph("Results flagged for a confirmatory retest or a review of the laboratory's data, with the "
                        "reason and a suggested action (thresholds in Appendix A).")]
    if r.empty:
        return Section("retest", "Confirmatory retest list", blocks + [Paragraph("No result is flagged.", "note")])
    docs = documents_only(r)
    if docs.any():
        asks = " ".join(r.loc[docs, "suggested_action"].astype(str).unique())
        blocks += [Heading("Documents to ask the laboratory for"),
                   Paragraph("These batches came without the laboratory's QC summary, so their QC could not be "
                             "reviewed; no sample needs analysing for this reason. Their results are counted here, "
                             "not listed one by one (every row is in the workbook, sheet retest). " + asks),
                   Table(in_words(documents_by_batch(r[docs])), "retest-documents-table", key_columns=2, max_columns=8)]
    flagged = r[~docs]
    if flagged.empty:
        return Section("retest", "Confirmatory retest list", blocks + [Paragraph(
            "No result is flagged for a confirmatory retest.", "note")], landscape=True)
    shown, more = cut(flagged.sort_values(["site_id", "sampled_at", "analyte"]), ctx.options.max_rows,
                      "the workbook (sheet retest)")
    if docs.any():
        blocks.append(Heading("Results flagged for a confirmatory retest or review"))
    blocks.append(Table(once_per_site(in_words(shown[[c for c in RETEST_COLUMNS if c in shown.columns]])), "retest-table",
                        key_columns=3, max_columns=9, more=more))
    return Section("retest", "Confirmatory retest list", blocks, landscape=True)


def documents_by_batch(rows: pd.DataFrame) -> pd.DataFrame:
    """Retest rows asking for documents, one row per laboratory, batch and reason: results, samples,
    sites, first and last sampling date."""
    g = rows.assign(**{c: rows[c].astype(str) for c in ("lab", "batch", "reason", "site_id")}).groupby(
        ["lab", "batch", "reason"], sort=True)
    out = g.agg(n=("sample_id", "size"), n_samples=("sample_id", "nunique"), n_sites=("site_id", "nunique"),
                first_sampled=("sampled_at", "min"), last_sampled=("sampled_at", "max")).reset_index()
    return out


def lab_qc_section(ctx: Context) -> Section | None:
    """The laboratory QC review: each batch's narrative, QC values outside their windows, calibration."""
    d = ctx.data
    if d.lab_qc_batches is None and d.calibration is None:
        return None
    blocks = []
    if d.lab_qc_batches is not None:
        blocks += [Heading("Data review narrative, by batch")]
        blocks += [Paragraph(str(t)) for t in d.lab_qc_batches["narrative"]]
        blocks.append(Heading("QC values outside their windows or not judged"))
        v, more = cut(d.lab_qc_verdicts, ctx.options.max_rows, "the workbook (sheet lab_qc_verdicts)")
        blocks.append(Table(in_words(v), "labqc-verdicts-table", key_columns=3, max_columns=12, more=more) if len(v)
                      else Paragraph("Every QC value was judged and within its window.", "note"))
    if d.calibration is not None:
        blocks += [Heading("Calibration"), Paragraph("Fits per analyte and run, with LOD = 3.3 σ / slope and "
                                                     "LOQ = 10 σ / slope (ICH Q2(R2))."),
                   Table(in_words(d.calibration), "calibration-table", key_columns=2, max_columns=12)]
    return Section("labqc", "Laboratory QC review", blocks, landscape=True)


def build_document(data: ReportData, site_ids=None, options: ReportOptions | None = None) -> Document:
    """The whole report, from a run's :class:`~tracescreen.report.tables.ReportData`.

    Parameters
    ----------
    data : ReportData
    site_ids : list of str, optional
        Restrict to these sites (files and rejected rows always cover the whole job).
    options : ReportOptions, optional

    Returns
    -------
    Document
        Charts are plotly figures, not yet drawn (:func:`tracescreen.report.images.draw`).
    """
    from tracescreen.report import appendices
    from tracescreen.report.summary import executive_summary
    from tracescreen.retest.rows import site_samples

    options = options or ReportOptions()
    scr = site_samples(only_sites(data.screening, site_ids))  # once: QC samples are not screened
    refs = findings.limit_references(data.limit_tables, scr["limit_table"].dropna().astype(str).unique())
    ctx = Context(data, scr, refs, site_ids, options)
    extra = appendices.summary_sentences(ctx)
    summary = executive_summary(scr, data.limit_entries, refs, data.sites, only_sites(data.trends, site_ids),
                                data.rejected, only_sites(data.retest, site_ids), extra)
    body = [grid_section(ctx), exceedance_section(ctx), undecided_section(ctx), trend_section(ctx), statistics_section(ctx),
            chart_section(ctx),
            retest_section(ctx), lab_qc_section(ctx), appendices.wells_section(ctx)]
    default_title = "Site summary: " + (", ".join(site_ids) if site_ids else "all sites")
    return Document(cover=options.cover.with_defaults(default_title), caution=CAUTION, summary=summary,
                    sections=[s for s in body if s is not None] + appendices.appendices(ctx))


def front_rows(doc: Document) -> list[tuple[str, str]]:
    """The first page as (label, text) rows: title, cover fields, caution, summary sentences (a
    workbook's first sheet)."""
    rows = [("Title", doc.cover.title), *doc.cover.rows(), ("Caution", doc.caution)]
    for b in doc.summary:
        items = b.items if isinstance(b, Bullets) else [b.text]
        rows += [("Summary", t) for t in items]
    return rows
