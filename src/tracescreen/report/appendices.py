"""The report's appendices (statistical design, limit tables with full citations, data received,
codes and words, method notes), the section on wells against background, and the summary sentences
of the laboratory QC review and of the wells.
"""

from __future__ import annotations

import pandas as pd

from tracescreen.report.document import Heading, Paragraph, Section, Table
from tracescreen.report.tables import files_table, limit_tables_used, method_notes
from tracescreen.report.words import codes_table, in_words


def summary_sentences(ctx) -> list[str]:
    """Executive-summary sentences of the laboratory QC review and of the wells against background."""
    out = []
    d = ctx.data
    if d.lab_qc_verdicts is not None and d.lab_qc_batches is not None:
        n = len(d.lab_qc_verdicts)
        out.append(f"The laboratory QC review covered {len(d.lab_qc_batches):,} batches: "
                   + (f"{n:,} QC values were outside their windows or could not be judged." if n
                      else "every QC value was within its window."))
    if d.wells is not None:
        from tracescreen.report.wells import attention

        need = attention(d.wells, ctx.site_ids)
        out.append(f"Against background, {len(need):,} compliance well–constituent series need attention "
                   "(a confirmed or initial exceedance, or a lower confidence limit above a standard)."
                   if len(need) else "Against background, no compliance well needs attention.")
    return out


def wells_section(ctx) -> Section | None:
    """Wells against background and fixed standards (the design is in Appendix A)."""
    if ctx.data.wells is None:
        return None
    from tracescreen.report.document import Figure
    from tracescreen.report.well_figures import well_figure
    from tracescreen.report.wells import MAX_CHARTS, attention, wells_tables

    t = wells_tables(ctx.data.wells, ctx.site_ids)
    need = attention(ctx.data.wells, ctx.site_ids)
    blocks = [Paragraph("Statistics of monitoring wells against background and fixed standards after the US EPA Unified "
                        "Guidance (EPA 530-R-09-007, 2009); the statistical design is stated in Appendix A. They "
                        "support, and do not replace, the regulator's decision."),
              Heading("Status over the retest sequence"), Table(in_words(t["wells_status"]), "wells-status-table",
                                                                key_columns=3, max_columns=13),
              Heading("Wells needing attention")]
    for r in need.head(MAX_CHARTS).itertuples():
        fig = well_figure(ctx.data.wells, r.site_id, r.analyte, r.fraction)
        fid = "well-chart-" + "".join(ch if ch.isalnum() else "-" for ch in f"{r.site_id}-{r.analyte}-{r.fraction}")
        blocks.append(Figure(fig, fid, f"{r.site_id}: {r.analyte} ({r.fraction}) against background", 720,
                             int(fig.layout.height or 560)))
    if len(need) > MAX_CHARTS:
        blocks.append(Paragraph(f"{len(need) - MAX_CHARTS} more wells need attention; see the tables.", "note"))
    if need.empty:
        blocks.append(Paragraph("No well needs attention.", "note"))
    blocks += [Heading("Prediction limits and their inputs"),
               Table(in_words(t["wells_limits"]), "wells-limits-table", key_columns=3, max_columns=12),
               Heading("Confidence limits against standards"),
               Table(in_words(t["wells_confidence"]), "wells-confidence-table", key_columns=3, max_columns=12)
               if len(t["wells_confidence"]) else
               Paragraph("No standard applies to the compliance wells (give --limits).", "note")]
    return Section("wells", "Wells against background and standards", blocks, landscape=True)


def design_appendix(ctx) -> Section:
    """Appendix A: the statistical design (non-detects, trend test, alpha, guard band, retest thresholds; the wells' design)."""
    d = ctx.data
    rows = pd.DataFrame(list(d.settings.items()), columns=["item", "value"])
    blocks = [Paragraph("The choices behind every number in this report. A non-detect is never taken as zero and "
                        "never counted as an exceedance: it is compared with a limit through its detection limit.")]
    blocks.append(Table(in_words(rows), "design-table", key_columns=1, max_columns=2) if len(rows)
                  else Paragraph("No settings were recorded.", "note"))
    blocks.append(Paragraph(
        "Measurement uncertainty: each result's guard band and decision are in the screening table (a guard band "
        "of f × U around each limit, Eurachem/CITAC 2021)." if "guard_band_ug_L" in ctx.screening.columns else
        "Measurement uncertainty: no guard band was applied; a result is compared with the limit as reported "
        "(results within their reported uncertainty of a limit are flagged in the retest list)."))
    blocks += [Paragraph(str(n)) for n in d.method_notes]
    if d.wells is not None:
        blocks += [Heading("Wells against background: design"),
                   Table(in_words(d.wells["design_statement"]), "wells-design-table", key_columns=1, max_columns=6)]
    return Section("design", "Statistical design", blocks, appendix=True)


def limits_appendix(ctx) -> Section:
    """Appendix B: each limit table used, with its reference [k], full citation and the entries that applied."""
    tables, entries = limit_tables_used(ctx.data, ctx.screening)
    blocks = []
    if ctx.refs.empty:
        blocks.append(Paragraph("No limit table applied to these results.", "note"))
    for r in ctx.refs.itertuples():
        t = tables[tables["table_id"] == r.table_id]
        t = t.iloc[0] if len(t) else {}
        blocks.append(Heading(f"[{r.ref}] {r.name}"))
        blocks.append(Paragraph(f"Source: {r.source}" + (f" {r.url}" if r.url else "")))
        blocks.append(Paragraph(f"Table code {r.table_id}; water use protected: {str(t.get('use', '')).replace('_', ' ')}; "
                                f"unit as published: {t.get('unit', '')}."
                                + (f" Notes: {t.get('notes')}" if str(t.get("notes", "") or "") not in ("", "nan") else ""),
                                "note"))
        e = entries[entries["table_id"] == r.table_id].drop(columns="table_id")
        if len(e):
            blocks.append(Table(in_words(e), f"entries-{r.table_id}", key_columns=2, max_columns=9))
    return Section("limits", "Limit tables and citations", blocks, appendix=True)


def data_appendix(ctx) -> Section:
    """Appendix C: files read (rows read, accepted, rejected; SHA-256) and the rejected rows with reasons."""
    from tracescreen.report.build import cut

    d = ctx.data
    files = files_table(d.files)
    rejected, more = cut(d.rejected, ctx.options.max_rows, "the workbook (sheet rejected)")
    keep = [c for c in ("file", "sheet", "row", "reason") if c in rejected.columns]
    blocks = [Paragraph("Every file read, with its SHA-256 checksum; rows read = accepted + set aside + rejected. "
                        "Rejected rows are listed with the reason (their original cells are in the workbook)."),
              Table(in_words(files), "files-table", key_columns=1, max_columns=9),
              Heading("Rejected rows")]
    blocks.append(Table(in_words(rejected[keep]), "rejected-table", key_columns=3, max_columns=4, more=more)
                  if len(rejected) else Paragraph("No row was rejected.", "note"))
    return Section("data", "Data received", blocks, appendix=True, landscape=True)


def codes_appendix(ctx, columns) -> Section:
    """Appendix D: the codes behind the words (column codes of the workbook and CSV files, status codes)."""
    return Section("codes", "Codes and words", [
        Paragraph("The workbook and the CSV outputs name columns and statuses by code; this report shows them in "
                  "words. Each code with its words:"),
        Table(codes_table(columns).rename(columns={"kind": "Kind", "code": "Code", "words": "Words"}), "codes-table",
              key_columns=2, max_columns=3)], appendix=True)


def methods_appendix(ctx) -> Section:
    """Appendix E: method notes."""
    notes = method_notes(ctx.data)
    return Section("methods", "Method notes", [Paragraph(f"{t.capitalize()}: {n}") for t, n in
                                                notes[["topic", "note"]].itertuples(index=False)], appendix=True)


def appendices(ctx) -> list[Section]:
    """Every appendix, in order."""
    d = ctx.data
    frames = [d.screening, d.summary, d.trends, d.retest, d.exceedance_rates, d.files, d.lab_qc_verdicts]
    columns = {str(c) for f in frames if f is not None for c in f.columns} | {"file", "sheet", "row", "reason"}
    return [design_appendix(ctx), limits_appendix(ctx), data_appendix(ctx), codes_appendix(ctx, columns),
            methods_appendix(ctx)]
