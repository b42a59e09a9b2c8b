"""Static images of the report's charts, and the browser that draws them and prints the PDF.

Charts are plotly figures drawn once to SVG (HTML, PDF; WebP for a dense chart) or PNG (Word) by kaleido in a headless
Chromium or Chrome, with plotly.js from the installed plotly package and no MathJax, so nothing is
fetched from the network. The browser is :func:`find_browser`: ``TRACESCREEN_BROWSER`` (or
``BROWSER_PATH``) if set, else the first of ``chromium``, ``chromium-browser``, ``google-chrome``,
``google-chrome-stable``, ``chrome``, ``msedge`` on the PATH.
"""

from __future__ import annotations

import asyncio
import os
import shutil

BROWSERS = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable", "chrome", "msedge")
#: Parallel browser tabs drawing charts.
TABS = 2
#: Pixels per CSS pixel of PNG images (Word; sharp when printed: 1,440 pixels over 18 cm, 200 dpi).
PNG_SCALE = 2
#: Pixels per CSS pixel of WebP images (dense charts in HTML and PDF: 1,008 pixels over 18 cm, 140 dpi). At 300
#: sites and 1,000,000 results the HTML was 6.2 MB at scale 2 and 5.1 MB at 1.5 (bench/bench_report.py).
WEBP_SCALE = 1.4


class ReportError(RuntimeError):
    """The report cannot be written as asked (no browser for charts or PDF, a PDF that failed)."""


def find_browser() -> str:
    """Path of the Chromium or Chrome that draws charts and prints PDFs.

    Raises
    ------
    ReportError
        When none is found (the message says how to install one or to go without charts).
    """
    for var in ("TRACESCREEN_BROWSER", "BROWSER_PATH"):
        path = os.environ.get(var)
        if path:
            if shutil.which(path) or os.path.isfile(path):
                return shutil.which(path) or path
            raise ReportError(f"{var}={path!r}: no browser there")
    for name in BROWSERS:
        path = shutil.which(name)
        if path:
            return path
    raise ReportError("charts and PDF need Chromium or Chrome: install one (Debian: apt-get install chromium) "
                      "or set TRACESCREEN_BROWSER to its path; or write the report with --charts none and without --pdf")


async def _draw(figures: list, fmt: str, browser: str) -> list[bytes]:
    import kaleido

    async with kaleido.Kaleido(n=min(TABS, max(len(figures), 1)), mathjax=False, path=browser) as k:
        jobs = [k.calc_fig(f.figure, opts={"format": fmt, "width": f.width, "height": f.height,
                                             "scale": {"svg": 1, "webp": WEBP_SCALE}.get(fmt, PNG_SCALE)}) for f in figures]
        return await asyncio.gather(*jobs)


def draw(figures: list, formats=("page",)) -> None:
    """Draw each :class:`tracescreen.report.document.Figure` in each format into its ``images``;
    ``"page"`` is each figure's own :attr:`~tracescreen.report.document.Figure.page_format`.

    Raises
    ------
    ReportError
        No browser, or the browser failed to draw.
    """
    wanted = [(f, f.page_format if fmt == "page" else fmt) for f in figures for fmt in formats]
    wanted = [(f, fmt) for f, fmt in wanted if fmt not in f.images]
    if not wanted:
        return
    browser = find_browser()
    for fmt in ("svg", "png", "webp"):
        need = list({id(f): f for f, w in wanted if w == fmt}.values())
        if not need:
            continue
        try:
            images = asyncio.run(_draw(need, fmt, browser))
        except Exception as exc:  # the browser's own errors are many kinds
            raise ReportError(f"drawing the charts with {browser} failed: {exc}") from None
        for f, data in zip(need, images):
            f.images[fmt] = data
