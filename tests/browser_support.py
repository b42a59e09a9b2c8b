"""Driving the dashboard in headless Chromium (Debian's /usr/bin/chromium through Playwright; never a
downloaded browser), as a person does: the shared server, browser and page fixtures' helpers."""

from __future__ import annotations

import contextlib
import threading
from pathlib import Path

from dashboard_support import ROOT

CHROMIUM = Path("/usr/bin/chromium")
SHOTS = ROOT / "test-output" / "screenshots"
#: Playwright passes --headless, --no-sandbox and others; these stop every look-up of an outside host
CHROME_FLAGS = ["--disable-gpu",
                "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]


@contextlib.contextmanager
def serve(app):
    """Serve a Dash app on a free loopback port; yields its base address."""
    from werkzeug.serving import make_server

    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        yield f"http://127.0.0.1:{server.server_port}"
    finally:
        server.shutdown()
        thread.join(5)


@contextlib.contextmanager
def chromium():
    """The browser (one per test module)."""
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=str(CHROMIUM), headless=True, args=CHROME_FLAGS)
        try:
            yield b
        finally:
            b.close()


@contextlib.contextmanager
def new_page(browser, width: int = 1400, height: int = 1000):
    """A fresh page that records browser errors in ``page.js_errors`` (every test asserts it is empty)."""
    ctx = browser.new_context(viewport={"width": width, "height": height}, accept_downloads=True)
    pg = ctx.new_page()
    pg.js_errors = []
    pg.on("pageerror", lambda e: pg.js_errors.append(str(e)))
    pg.on("console", lambda m: m.type == "error" and pg.js_errors.append(m.text))
    try:
        yield pg
    finally:
        ctx.close()


def shot(page, name: str) -> None:
    """A full-page screenshot under test-output/screenshots/ (git-ignored) for a person to look at."""
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / f"{name}.png"), full_page=True)


def choose(page, dropdown_id: str, option: str) -> None:
    """Pick an option of a Dash 4 dropdown by its words."""
    page.locator(f"#{dropdown_id}").click()
    page.get_by_role("option", name=option, exact=True).click()
    page.keyboard.press("Escape")  # an already chosen option leaves the menu open


def grid_filter(page, grid_id: str, heading: str):
    """The box under a grid's column heading where a person types a filter."""
    comparison = page.locator(f'#{grid_id} input[aria-label^="Filter {heading} ("]')
    return comparison if comparison.count() else page.locator(f'#{grid_id} input[aria-label="{heading} Filter Input"]')


def grid_count(page, prefix: str) -> int:
    """Rows passing the grid's filters, from its "n of N rows" text."""
    return int(page.locator(f"#{prefix}-count").inner_text().split(" of ")[0].replace(",", ""))


CHART_JS = """(id) => {
    const gd = document.querySelector('#' + id + ' .js-plotly-plot');
    if (!gd || !gd._fullData) return null;
    const role = r => gd._fullData.filter(t => t.meta && t.meta.role === r);
    return {title: gd.layout.title && gd.layout.title.text,
            points: role('result').reduce((n, t) => n + t.x.length, 0),
            custom: role('result').flatMap(t => t.customdata || []),
            limits: role('limit').map(t => ({name: t.name, tables: t.meta.tables, y: Array.from(t.y)})),
            periods: role('period').length, ticktext: gd.layout.yaxis.ticktext || null,
            sites: role('sites').flatMap(t => t.customdata || []), overlays: role('overlay').length,
            annotations: (gd.layout.annotations || []).map(a => a.text)};
}"""


def chart(page, graph_id: str = "site-chart") -> dict:
    """What a plotly chart on the page draws (its decoded traces, by role)."""
    return page.evaluate(CHART_JS, graph_id)
