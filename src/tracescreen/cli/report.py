"""``tracescreen report``: the site summary report as printable HTML, and on request PDF, Word and a workbook."""

from __future__ import annotations

from pathlib import Path

from . import UserError
from .common import add_data_options, announce, pipeline_inputs, print_caution
from .flag_options import add_retest_options, retest_options
from .labqc import add_lab_qc_options, lab_qc_options
from .parser import group
from .trends import add_statistics_options, statistics_options
from .wells import add_wells_options, wells_options

EXAMPLES = [
    "tracescreen report scenario_data/lab_results_fernleigh_2017-2020.csv scenario_data/lab_results_fernleigh_2021-2025.csv "
    "scenario_data/lab_results_eastbank.xlsx --columns scenario_data/columns_eastbank.yaml "
    "--sites scenario_data/sites.csv --limits limits --limits scenario_data/limits "
    "--out out/demo/report.html --xlsx out/demo/report.xlsx --client 'Kestrel Catchment Trust' --prepared-by 'A. Analyst'",
]

#: choices of --charts (tracescreen.report.charts.WHICH; kept here so that --help loads no pandas)
CHART_CHOICES = ("findings", "all", "none")
COVER_OPTIONS = (("client", "client the report is for"), ("project", "project name"),
                 ("project-site", "the site or area the report covers (the cover's 'Site')"),
                 ("prepared-by", "who prepared the report"), ("checked-by", "who checked it"),
                 ("report-version", "version of the report (e.g. 1.0, draft 2)"),
                 ("report-date", "date on the cover (default today)"), ("notes", "a note on the cover"))


def register(sub) -> None:
    p = sub.add_parser(
        "report", help="write the site summary report: printable HTML, and PDF, Word and workbook on request",
        description="Screen the results as `screen` does and write the site summary report as one HTML file "
                    "that opens offline and prints on A4 (optionally also PDF, Word and a workbook): a first "
                    "page with the cover, the caution and an executive summary; the site–metal grid; "
                    "exceedances with their limits side by side; undecided results; trends; charts per metal "
                    "with one panel per site; the confirmatory retest list; laboratory QC and wells where given; "
                    "appendices with the statistical design, full limit citations, files and rejected rows, "
                    "and the codes behind the words. Charts and PDF need Chromium or Chrome.")
    add_data_options(p)
    add_statistics_options(p)
    out, contents, cover = group(p, "output"), group(p, "contents"), group(p, "cover")
    out.add_argument("--out", required=True, metavar="FILE.html", help="HTML file to write")
    out.add_argument("--pdf", metavar="FILE.pdf", help="also print the report to PDF (headless Chromium)")
    out.add_argument("--docx", metavar="FILE.docx", help="also write an editable Word document")
    out.add_argument("--xlsx", metavar="FILE", help="also write a workbook with one sheet per table")
    contents.add_argument("--site", action="append", metavar="ID",
                          help="report only this site (repeat for several; default all)")
    cover.add_argument("--title", help="report title (default names the sites)")
    cover.add_argument("--cover", metavar="FILE.yaml", help="cover fields (title, client, project, site, prepared_by, "
                       "checked_by, version, date, notes) from a YAML file; the options below win over it")
    for name, text in COVER_OPTIONS:
        cover.add_argument(f"--{name}", metavar="TEXT", help=text)
    contents.add_argument("--charts", choices=CHART_CHOICES, default="findings",
                          help="chart the series with findings (an exceedance, or a rising trend toward a limit), "
                               "all, or none")
    contents.add_argument("--max-charts", type=int, default=96, metavar="N",
                          help="draw at most N chart panels (one per site and metal); the rest are named")
    contents.add_argument("--max-rows", type=int, default=1000, metavar="N",
                          help="rows of a long table in the report (every row is in the workbook)")
    add_retest_options(p)
    add_lab_qc_options(p)
    add_wells_options(p, design_options=False)
    p.set_defaults(func=run)


def report_options(args):
    """:class:`tracescreen.report.build.ReportOptions` from the command's options (cover file and fields)."""
    from tracescreen.report.build import ReportOptions
    from tracescreen.report.cover import CoverError, load_cover

    fields = {"title": args.title, "client": args.client, "project": args.project, "site": args.project_site,
              "prepared_by": args.prepared_by, "checked_by": args.checked_by, "version": args.report_version,
              "date": args.report_date, "notes": args.notes}
    try:
        cover = load_cover(args.cover, **fields)
    except CoverError as exc:
        raise UserError(f"--cover {exc}") from None
    if args.max_charts < 0 or args.max_rows < 1:
        raise UserError("--max-charts must be 0 or more and --max-rows 1 or more")
    return ReportOptions(cover=cover, charts=args.charts, max_panels=args.max_charts, max_rows=args.max_rows)


def run(args) -> int:
    from tracescreen import pipeline, progress
    from tracescreen.report import writers as outputs
    from tracescreen.report.build import build_document, front_rows
    from tracescreen.report.html import render_html
    from tracescreen.report.images import ReportError, draw
    from tracescreen.report.output_folder import check_target, write_atomic
    from tracescreen.report.tables import report_data, report_tables

    report = report_options(args)
    for target in [args.out, args.xlsx, args.docx, args.pdf]:
        if target:  # before the work, not after it
            check_target(Path(target).parent, file=Path(target))
    options = pipeline.Options(cross_fraction=args.cross_fraction, periods=False,
                               statistics=statistics_options(args), retest=retest_options(args, UserError),
                               record_run=args.command, lab_qc=lab_qc_options(args), wells=wells_options(args))
    res = pipeline.run(pipeline_inputs(args), options, on_loaded=announce)
    site_ids = None
    if args.site:
        known = set(res.screened["site_id"])
        missing = [s for s in args.site if s not in known]
        if missing:
            raise UserError(f"--site {', '.join(missing)}: no accepted results for this site")
        site_ids = list(dict.fromkeys(args.site))
    progress.report("report", 0, 3, unit="steps", detail="tables")
    data = report_data(res, settings={
        "non-detect method (summaries)": args.stats_method,
        "trend test": f"Mann-Kendall / seasonal Kendall ({args.seasonal}), alpha {args.alpha:g}, "
                      f"at least {args.min_trend_values} values"})
    progress.report("report", 1, 3, unit="steps", detail="document")
    doc = build_document(data, site_ids, report)
    out = Path(args.out)
    try:  # each file written whole or not at all (report/output_folder.py)
        progress.report("report", 2, 3, unit="steps", detail="charts")
        draw(doc.figures(), ("page", "png") if args.docx else ("page",))
        html = render_html(doc)
        write_atomic(out, lambda p: p.write_text(html, encoding="utf-8"))
        progress.report("report", 3, 3, unit="steps", finished=True)
        print(f"Report: {out}")
        if args.pdf:
            from tracescreen.report.pdf import print_pdf

            print(f"PDF: {write_atomic(args.pdf, lambda p: print_pdf(out, p))}")
    except ReportError as exc:
        raise UserError(str(exc)) from None
    if args.docx:
        from tracescreen.report.word import write_docx

        print(f"Word document: {write_atomic(args.docx, lambda p: write_docx(doc, p))}")
    if args.xlsx:
        try:
            tables = report_tables(data, site_ids)
            path = write_atomic(args.xlsx, lambda p: outputs.write_xlsx(tables, p, front=front_rows(doc)))
        except ValueError as exc:  # a table longer than a sheet holds
            raise UserError(f"--xlsx {args.xlsx}: {exc}") from None
        print(f"Workbook: {path}")
    print_caution()
    return 0
