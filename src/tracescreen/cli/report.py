"""``tracescreen report``: one self-contained HTML site summary (and optionally a workbook)."""

from __future__ import annotations

import argparse
from pathlib import Path

from . import UserError
from .common import add_data_options, announce, pipeline_inputs, print_caution
from .flag_options import add_retest_options, retest_options
from .labqc import add_lab_qc_options, lab_qc_options
from .trends import add_statistics_options, statistics_options


def register(sub) -> None:
    p = sub.add_parser(
        "report", help="write a cited site summary report (self-contained HTML; optional XLSX)",
        description="Screen the results as `screen` does and write one HTML file that opens offline: "
                    "job and scope with file checksums, limit tables with citations, status matrix, "
                    "exceedances, charts per metal, summaries, trends, retest list, rejected rows and "
                    "method notes, with the caution first.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    add_data_options(p)
    add_statistics_options(p)
    p.add_argument("--out", required=True, metavar="FILE.html", help="HTML file to write")
    p.add_argument("--site", action="append", metavar="ID",
                   help="report only this site (repeat for several; default all)")
    p.add_argument("--xlsx", metavar="FILE", help="also write a workbook with one sheet per table")
    p.add_argument("--title", help="report title (default names the sites)")
    add_retest_options(p)
    add_lab_qc_options(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen import pipeline
    from tracescreen.report import writers as outputs
    from tracescreen.report.html import build_report_html
    from tracescreen.report.output_folder import OutputError, check_target, write_atomic
    from tracescreen.report.tables import report_data, report_tables

    for target in [Path(args.out)] + ([Path(args.xlsx)] if args.xlsx else []):
        check_target(target.parent, file=target)  # before the work, not after it
    options = pipeline.Options(cross_fraction=args.cross_fraction, periods=False,
                               statistics=statistics_options(args), retest=retest_options(args, UserError),
                               record_run=args.command, lab_qc=lab_qc_options(args))
    res = pipeline.run(pipeline_inputs(args), options, on_loaded=announce)
    site_ids = None
    if args.site:
        known = set(res.screened["site_id"])
        missing = [s for s in args.site if s not in known]
        if missing:
            raise UserError(f"--site {', '.join(missing)}: no accepted results for this site")
        site_ids = list(dict.fromkeys(args.site))
    data = report_data(res, settings={
        "non-detect method (summaries)": args.stats_method,
        "trend test": f"Mann-Kendall / seasonal Kendall ({args.seasonal}), alpha {args.alpha:g}, "
                      f"at least {args.min_trend_values} values"})
    out = Path(args.out)
    html = build_report_html(data, site_ids, args.title)
    write_atomic(out, lambda p: p.write_text(html, encoding="utf-8"))  # whole or not at all
    print(f"Report: {out}")
    if args.xlsx:
        try:
            path = write_atomic(args.xlsx, lambda p: outputs.write_xlsx(report_tables(data, site_ids), p))
        except OutputError:
            raise
        except ValueError as exc:  # a table longer than a sheet holds
            raise UserError(f"--xlsx {args.xlsx}: {exc}") from None
        print(f"Workbook: {path}")
    print_caution()
    return 0
