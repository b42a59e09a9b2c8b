"""Benchmark: the site summary report at many sites, against the run that feeds it.

Generates N results (default 100,000) at S sites (default 300, the size class of a 329-site public
data set) of eight metals in a lab-file layout, a sites file (names, uses, hardness), then times in
the same process:

* reference: ``pipeline.run`` as ``tracescreen report`` calls it (load, screen, statistics, retest);
* the report: ``build_document`` (content), ``draw`` (charts as SVG), ``render_html`` (the file),
  ``print_pdf`` (headless Chromium), and with ``--all`` also the Word document and the workbook.

Prints each time, the report's time as a ratio of the reference, the HTML and PDF sizes and page
count. Goals (issue: the report as a deliverable): HTML under 5 MB and report under 10 s at the
300-site size class.

    python bench/bench_report.py [--n 100000] [--sites 300] [--all]
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
METALS = ["Arsenic", "Lead", "Dissolved Zinc", "Copper", "Dissolved Cadmium", "Nickel", "Manganese", "Uranium"]
FRACTIONS = ["Total", "Total", "", "Total", "", "Total", "Total", "Total"]
MEDIAN = np.array([2.0, 1.0, 20.0, 3.0, 0.1, 3.0, 15.0, 2.0])  # µg/L, typical of unimpacted waters


def make_files(folder: Path, n: int, n_sites: int, seed: int = 7) -> tuple[Path, Path]:
    """A lab file of ``n`` results and its sites file; about one site in eight has raised metals."""
    rng = np.random.default_rng(seed)
    sites = np.array([f"W{i:04d}" for i in range(n_sites)])
    raised = rng.random((n_sites, len(METALS))) < 0.06  # a few site–metal series above their limits
    s = rng.integers(0, n_sites, n)
    m = rng.integers(0, len(METALS), n)
    days = pd.date_range("2012-01-01", "2025-12-31", freq="7D")
    t = rng.integers(0, len(days), n)
    val = MEDIAN[m] * rng.lognormal(0.0, 0.8, n) * np.where(raised[s, m], 12.0, 1.0)
    dl = MEDIAN[m] * 0.3
    nd = val < dl
    result = np.where(nd, np.char.add("<", np.char.mod("%.3g", dl)), np.char.mod("%.3g", val))
    lab = folder / "lab.csv"
    pd.DataFrame({"Site": sites[s], "Sample ID": np.char.add("L", (s * 100000 + t).astype(str)),
                  "Sample Date": days[t].strftime("%Y-%m-%d"), "Parameter": np.array(METALS)[m],
                  "Fraction": np.array(FRACTIONS)[m], "Result": result, "Units": "ug/L",
                  "LOR": np.char.mod("%.3g", dl)}).to_csv(lab, index=False)
    site_file = folder / "sites.csv"
    uses = np.where(np.arange(n_sites) % 3 == 0, "drinking_water", "freshwater_aquatic")
    pd.DataFrame({"site_id": sites, "name": [f"Station {i} on a river with a long name" for i in range(n_sites)],
                  "latitude": 50 + rng.random(n_sites), "longitude": -3 + rng.random(n_sites), "uses": uses,
                  "hardness_mg_L": np.round(rng.uniform(20, 250, n_sites)),
                  "water_body_type": "lotic"}).to_csv(site_file, index=False)
    return lab, site_file


def cpu() -> float:
    """CPU seconds of this process and its finished children (the browser): on a loaded shared machine
    the wall time says more about the other jobs than about the report."""
    own, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + kids.ru_utime + kids.ru_stime


def peak_mb() -> tuple[float, float]:
    """Peak resident memory (MB) so far of this process and of its largest finished child."""
    own, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_maxrss / 1024, kids.ru_maxrss / 1024  # ru_maxrss is in KiB on Linux


class Clock:
    """Wall and CPU time of each step, the peak memory after it and the load average before it."""

    def __init__(self):
        self.times: dict[str, tuple[float, float]] = {}
        self.peaks: dict[str, float] = {}
        self.loads: dict[str, float] = {}

    def __call__(self, name: str, fn, *args, **kwargs):
        self.loads[name] = os.getloadavg()[0]
        w, c = time.perf_counter(), cpu()
        out = fn(*args, **kwargs)
        self.times[name] = (time.perf_counter() - w, cpu() - c)
        self.peaks[name] = peak_mb()[0]
        return out


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=100_000)
    ap.add_argument("--sites", type=int, default=300)
    ap.add_argument("--all", action="store_true", help="also time the Word document and the workbook")
    ap.add_argument("--keep", metavar="DIR", help="write the files into DIR and keep them")
    a = ap.parse_args()
    sys.path.insert(0, str(ROOT / "src"))
    from tracescreen import pipeline
    from tracescreen.report.build import ReportOptions, build_document, front_rows
    from tracescreen.report.html import render_html
    from tracescreen.report.images import draw
    from tracescreen.report.pdf import print_pdf
    from tracescreen.report.tables import report_data, report_tables

    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(a.keep) if a.keep else Path(tmp)
        tmp.mkdir(parents=True, exist_ok=True)
        lab, sites = make_files(tmp, a.n, a.sites)
        inputs = pipeline.Inputs(results=(str(lab),), limits=(str(ROOT / "limits"),), sites=str(sites))
        clock = Clock()
        res = clock("pipeline.run (reference)", pipeline.run, inputs, pipeline.Options(periods=False))
        data = clock("content", lambda: report_data(res))
        doc = clock("content ", build_document, data, None, ReportOptions())
        clock("charts", draw, doc.figures(), ("page",))
        html = tmp / "report.html"
        clock("html", lambda: html.write_text(render_html(doc), encoding="utf-8"))
        pdf = clock("pdf", print_pdf, html, tmp / "report.pdf")
        if a.all:
            from tracescreen.report import writers
            from tracescreen.report.word import write_docx

            clock("word: png charts", draw, doc.figures(), ("png",))
            clock("word: docx", write_docx, doc, tmp / "report.docx")
            clock("workbook", lambda: writers.write_xlsx(report_tables(data, None), tmp / "report.xlsx",
                                                         front=front_rows(doc)))
        times = clock.times
        times["content"] = tuple(x + y for x, y in zip(times["content"], times.pop("content ")))
        t_run = times.pop("pipeline.run (reference)")
        pages = subprocess.run(["pdfinfo", str(pdf)], capture_output=True, text=True).stdout
        pages = next((ln.split()[-1] for ln in pages.splitlines() if ln.startswith("Pages")), "?")
        n_results = len(res.loaded.accepted)
        panels = sum(len([t for t in f.figure["data"] if t.get("mode") == "markers" and t.get("legendgroup")]) > 0
                     for f in doc.figures())
        print(f"{n_results:,} results at {a.sites} sites; {len(doc.figures())} chart figures ({panels} with markers)")
        loads, peaks = clock.loads, clock.peaks
        print(f"{'step':<40} {'wall s':>8} {'CPU s':>8} {'peak MB':>8} {'load 1m':>8}")
        ref = "pipeline.run (reference)"
        print(f"{'reference: pipeline.run (load ... retest)':<40} {t_run[0]:8.1f} {t_run[1]:8.1f} "
              f"{peaks[ref]:8.0f} {loads[ref]:8.2f}")
        for k, (w, c) in times.items():
            print(f"{'report: ' + k:<40} {w:8.1f} {c:8.1f} {peaks.get(k, peaks['content ']):8.0f} "
                  f"{loads[k]:8.2f}")
        print(f"peak resident memory of this process: {peak_mb()[0]:.0f} MB (the reference run's own peak: "
              f"{peaks[ref]:.0f} MB; the browser's is not separable: a child's figure counts the pages it shares "
              "with this process); load average now " + ", ".join(f"{x:.2f}" for x in os.getloadavg())
              + " (shared 2-core machine)")
        html_s = [sum(times[k][i] for k in ("content", "charts", "html")) for i in (0, 1)]
        print(f"report HTML total: wall {html_s[0]:.1f} s ({html_s[0] / t_run[0]:.2f} x the reference), CPU "
              f"{html_s[1]:.1f} s ({html_s[1] / t_run[1]:.2f} x); with PDF wall {html_s[0] + times['pdf'][0]:.1f} s")
        svg = sum(len(f.images[f.page_format]) for f in doc.figures()) * 4 / 3 / 1e6
        n_png = sum(f.page_format == "webp" for f in doc.figures())
        print(f"HTML {html.stat().st_size / 1e6:.2f} MB (goal < 5 MB; charts {svg:.2f} MB of it, {n_png} as WebP); PDF {pdf.stat().st_size / 1e6:.2f} MB, {pages} pages")
        for name in ("report.docx", "report.xlsx"):
            if (tmp / name).exists():
                print(f"{name} {(tmp / name).stat().st_size / 1e6:.2f} MB")


if __name__ == "__main__":
    main()
