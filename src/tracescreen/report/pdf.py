"""The report as PDF: the printable HTML printed by headless Chromium.

Why the browser and not an HTML-to-PDF library: the PDF is then exactly what a reader gets from the
browser's own print of the HTML (one layout, tested once), Chromium follows the CSS paged media the
page uses (named landscape pages, repeated table headers, "Page n of N" margin boxes), and the
project already needs Chromium to draw the charts. WeasyPrint would add Pango and its own layout
engine, and cannot draw plotly charts by itself. Chromium runs without network access to outside
hosts (the page has no outside request anyway) and within :data:`TIMEOUT` seconds.
"""

from __future__ import annotations

import os
import subprocess
import tempfile
from pathlib import Path

from tracescreen.report.images import ReportError, find_browser

#: Seconds Chromium may take to print one report.
TIMEOUT = 300

FLAGS = ["--headless", "--disable-gpu", "--no-pdf-header-footer", "--no-first-run", "--disable-extensions",
         "--disable-background-networking", "--disable-sync", "--hide-scrollbars",
         "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost"]


def print_pdf(html_path: str | Path, pdf_path: str | Path, browser: str | None = None) -> Path:
    """Print an HTML file to PDF with headless Chromium (page size and orientation from the page's CSS).

    Raises
    ------
    ReportError
        No browser, or printing failed (the message gives the browser's last words).
    """
    browser = browser or find_browser()
    html_path, pdf_path = Path(html_path).resolve(), Path(pdf_path)
    pdf_path.parent.mkdir(parents=True, exist_ok=True)
    flags = FLAGS + (["--no-sandbox"] if hasattr(os, "geteuid") and os.geteuid() == 0 else [])
    with tempfile.TemporaryDirectory(prefix="tracescreen-pdf-") as profile:
        tmp = Path(profile) / "report.pdf"
        cmd = [browser, *flags, f"--user-data-dir={profile}", f"--print-to-pdf={tmp}", html_path.as_uri()]
        try:
            done = subprocess.run(cmd, capture_output=True, text=True, timeout=TIMEOUT, check=False)
        except subprocess.TimeoutExpired:
            raise ReportError(f"printing the PDF with {browser} took more than {TIMEOUT} s") from None
        if not tmp.is_file() or tmp.stat().st_size == 0:
            last = (done.stderr or done.stdout).strip().splitlines()[-1:] or ["no message"]
            raise ReportError(f"printing the PDF with {browser} failed (exit {done.returncode}): {last[0]}")
        pdf_path.write_bytes(tmp.read_bytes())
    return pdf_path
