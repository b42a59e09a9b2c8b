"""The report in headless Chromium (Playwright driving Debian's /usr/bin/chromium, no network): the HTML
opens offline, and printed to PDF (by the browser here, and by `tracescreen report --pdf`) every
exceedance row and the first page's summary and caution are in the PDF's text (pdftotext, Debian's
poppler-utils).

Outside references: screening.csv of `tracescreen screen` on the same files (the engine's rows the
report must show), the demo lab files' own result texts, and the published limit values named beside
each check.
"""

import re
import shutil
import subprocess
from pathlib import Path

import pandas as pd
import pytest

from tracescreen import vocabulary
from tracescreen.caution import CAUTION

pytestmark = pytest.mark.browser
playwright = pytest.importorskip("playwright.sync_api")

CHROME_FLAGS = ["--disable-gpu",
                "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]
SHOTS = Path(__file__).resolve().parents[1] / "test-output"
needs_pdftotext = pytest.mark.skipif(shutil.which("pdftotext") is None, reason="pdftotext (poppler-utils) not installed")


def pdf_text(path, first=None, last=None) -> str:
    """The PDF's text (pdftotext in layout mode: a table row is one line), whitespace collapsed."""
    args = ["pdftotext", "-layout"] + (["-f", str(first), "-l", str(last)] if first else []) + [str(path), "-"]
    return re.sub(r"\s+", " ", subprocess.run(args, capture_output=True, text=True, check=True).stdout)


@pytest.fixture(scope="module")
def browser():
    with playwright.sync_playwright() as p:
        b = p.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
        yield b
        b.close()


@pytest.fixture(scope="module")
def page(browser, demo_report):
    """The demo report opened from file://; every request other than the file itself is aborted and recorded."""
    ctx = browser.new_context(viewport={"width": 1280, "height": 900})
    pg = ctx.new_page()
    pg.js_errors, pg.outside = [], []
    pg.on("pageerror", lambda e: pg.js_errors.append(str(e)))
    pg.on("console", lambda m: m.type == "error" and pg.js_errors.append(m.text))

    def route(r):
        if r.request.url.startswith(("file://", "data:")):
            r.continue_()
        else:
            pg.outside.append(r.request.url)
            r.abort()
    ctx.route("**/*", route)
    pg.goto(demo_report["html"].as_uri())
    SHOTS.mkdir(exist_ok=True)
    pg.screenshot(path=str(SHOTS / "report-first-screen.png"))
    yield pg
    ctx.close()


@pytest.fixture(scope="module")
def printed(page, tmp_path_factory):
    """The page printed to PDF by the browser (A4 and landscape pages from the page's own CSS)."""
    path = tmp_path_factory.mktemp("printed") / "report.pdf"
    page.emulate_media(media="print")
    page.pdf(path=str(path), prefer_css_page_size=True, print_background=True)
    page.emulate_media(media="screen")
    return path


@pytest.fixture(scope="module")
def exceeding(demo_screen_dir) -> pd.DataFrame:
    """The site-sample results above a limit in screening.csv, one row per result."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype={"sample_id": str, "result_text": str})
    exc = scr[scr["status"].eq("exceeds") & scr["sample_type"].eq("sample")]
    return exc.drop_duplicates(["file", "sheet", "row"])


def test_opens_offline_without_script_and_caution_on_first_screen(page):
    """The caution is visible within the first 1280×900 screen; nothing is fetched; the page has no script."""
    caution = page.locator("#caution")
    assert CAUTION in caution.inner_text()
    box = caution.bounding_box()
    assert box["y"] + box["height"] <= 900
    assert page.outside == [] and page.js_errors == []
    assert page.locator("script").count() == 0


def test_sections_in_order_and_charts_drawn(page, demo_report):
    """Sections follow the contents list in order; every chart is an SVG image the browser decoded."""
    ids = page.eval_on_selector_all("nav a", "as => as.map(a => a.getAttribute('href').slice(1))")
    tops = [page.locator(f"section#{i}").bounding_box()["y"] for i in ids]
    assert tops == sorted(tops) and {"grid", "exceedances", "charts", "limits", "design", "codes"} <= set(ids)
    imgs = page.locator("#charts figure img")
    assert imgs.count() > 0
    assert page.eval_on_selector_all("#charts figure img", "is => is.every(i => i.complete && i.naturalWidth > 0)")


def test_no_scroll_box_when_printed(page):
    """In print, no table sits in a scroll box (overflow visible) and table headers repeat on each page."""
    page.emulate_media(media="print")
    try:
        overflow = page.eval_on_selector_all(".tablewrap", "ws => ws.map(w => getComputedStyle(w).overflowX)")
        heads = page.eval_on_selector_all("thead", "hs => hs.map(h => getComputedStyle(h).display)")
    finally:
        page.emulate_media(media="screen")
    assert overflow and set(overflow) == {"visible"}
    assert set(heads) == {"table-header-group"}


@needs_pdftotext
@pytest.mark.parametrize("which", ["browser print", "tracescreen --pdf"])
def test_every_exceedance_row_is_in_the_pdf(which, printed, demo_report, exceeding):
    """Each result above a limit in screening.csv appears in the PDF as one row: its sample id, date and
    value to the lab's precision (the lab file's result text), so no table is cut by the page."""
    text = pdf_text(printed if which == "browser print" else demo_report["pdf"])
    section = text[text.index("2 Exceedances"):text.index("3 Undecided results")]
    missing = [f"{r.sample_id} {r.sampled_at[:10]}" for r in exceeding.itertuples()
               if not re.search(rf"{re.escape(r.sampled_at[:10])} {re.escape(r.sample_id)} ", section)]
    assert missing == []
    assert len(exceeding) > 100


@needs_pdftotext
def test_first_pdf_page_has_summary_and_caution(demo_report, demo_screen_dir):
    """Page 1 of the PDF holds the cover, the caution and the summary's counts, recomputed from screening.csv."""
    first = pdf_text(demo_report["pdf"], 1, 1)
    assert re.sub(r"\s+", " ", CAUTION) in first
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype={"sample_id": str})
    site = scr[scr["sample_type"].eq("sample")]
    n_results = len(site.drop_duplicates(["file", "sheet", "row"]))
    exc = site[site["status"].eq("exceeds")]
    assert f"This report screens {n_results:,} results of {site['sample_id'].nunique():,} samples" in first
    assert f"from {site['site_id'].nunique()} sites" in first
    assert (f"{len(exc.drop_duplicates(['file', 'sheet', 'row'])):,} results at {exc['site_id'].nunique()} sites "
            "exceed at least one limit") in first
    assert "Kestrel Catchment Board (fictional)" in first and "Checked by B. Reviewer" in first
    assert "Executive summary" in first


@needs_pdftotext
def test_published_limit_beside_arsenic_exceedance(demo_report):
    """BH01's arsenic result 10.6 µg/L (lab file text) is shown against 10 µg/L, the WHO guideline value
    (WHO GDWQ 4th ed. 2022, Table A3.3: arsenic 0.01 mg/L) marked exceeded."""
    text = pdf_text(demo_report["pdf"])
    assert re.search(r"2017-02-06 EB300001 arsenic total 10\.6 µg/L 10\.6 .*?▲ 10", text)


def test_grid_cells_are_glyph_word_count_from_screening_csv(page, demo_screen_dir):
    """Each site–metal grid cell reads '<glyph> <word> k/n', recomputed from screening.csv (worst status of each result)."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype=str, keep_default_na=False)
    site = scr[scr["sample_type"].eq("sample")].copy()
    site["rank"] = site["status"].map(vocabulary.STATUS_CODE)
    worst = site.groupby(["file", "sheet", "row", "site_id", "analyte", "fraction"])["rank"].min().reset_index()
    cells = page.eval_on_selector_all(
        "#site-metal-grid, #grid table", "ts => ts.flatMap(t => Array.from(t.tBodies[0].rows).map(r => "
        "Array.from(r.cells).map((c, i) => [r.cells[0].textContent, t.tHead.rows[0].cells[i].textContent, c.textContent])))")
    shown = {(s, m): v for row in cells for s, m, v in row}
    checked = 0
    for (sid, analyte, fraction), g in worst.groupby(["site_id", "analyte", "fraction"]):
        w = g["rank"].min()
        status = vocabulary.STATUSES[w]
        expected = f"{vocabulary.GLYPH[status]} {vocabulary.SHORT[status]} {int((g['rank'] == w).sum())}/{len(g)}"
        assert shown[(sid, f"{analyte} ({fraction})")] == expected
        checked += 1
    assert checked > 100


def test_chart_page_image(demo_report):
    """A chart page of the PDF rendered to PNG (test-output/report-chart-page.png, looked at by a person)."""
    if shutil.which("pdftoppm") is None:
        pytest.skip("pdftoppm (poppler-utils) not installed")
    text = subprocess.run(["pdftotext", "-layout", str(demo_report["pdf"]), "-"], capture_output=True, text=True,
                          check=True).stdout.split("\f")
    page = next(i for i, t in enumerate(text, start=1) if "6 Charts" in t)
    SHOTS.mkdir(exist_ok=True)
    subprocess.run(["pdftoppm", "-png", "-r", "80", "-f", str(page + 1), "-l", str(page + 1), "-singlefile",
                    str(demo_report["pdf"]), str(SHOTS / "report-chart-page")], check=True)
    assert (SHOTS / "report-chart-page.png").stat().st_size > 20_000
