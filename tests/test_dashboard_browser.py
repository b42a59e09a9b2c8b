"""The dashboard end to end in real headless Chromium (Debian's /usr/bin/chromium via Playwright).

Screenshots of every page go to test-output/screenshots/ (git-ignored) for a human to look at.
"""

from __future__ import annotations

import threading
from pathlib import Path

import pandas as pd
import pytest
from dashboard_support import ROOT, engine_attention_rows, engine_view, scenario_inputs

pytestmark = pytest.mark.browser

CHROMIUM = Path("/usr/bin/chromium")
SHOTS = ROOT / "test-output" / "screenshots"
CHROME_FLAGS = ["--disable-gpu",
                "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]
UPLOAD_CAP = 100_000  # bytes, small so the cap can be tried with a small file

if not CHROMIUM.exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed (apt-get install chromium)", allow_module_level=True)


@pytest.fixture(scope="module")
def dash_url(tmp_path_factory):
    from werkzeug.serving import make_server

    from dashboard.app import create_app

    app = create_app(inputs=scenario_inputs(), max_upload_bytes=UPLOAD_CAP,
                     upload_dir=tmp_path_factory.mktemp("uploads"))
    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_port}"
    server.shutdown()
    thread.join(5)


@pytest.fixture(scope="module")
def browser():
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=str(CHROMIUM), headless=True, args=CHROME_FLAGS)
        yield b
        b.close()


@pytest.fixture
def page(browser):
    ctx = browser.new_context(viewport={"width": 1280, "height": 900}, accept_downloads=True)
    pg = ctx.new_page()
    pg.js_errors = []
    pg.on("pageerror", lambda e: pg.js_errors.append(str(e)))
    pg.on("console", lambda m: m.type == "error" and pg.js_errors.append(m.text))
    yield pg
    ctx.close()


def _shot(page, name: str) -> None:
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / f"{name}.png"), full_page=True)


def _choose(page, dropdown_id: str, option: str) -> None:
    page.locator(f"#{dropdown_id}").click()
    page.get_by_role("option", name=option, exact=True).click()
    page.keyboard.press("Escape")  # an already chosen option leaves the menu open


_CHART_JS = """() => {
    const gd = document.querySelector('#site-chart .js-plotly-plot');
    if (!gd || !gd._fullData) return null;
    // _fullData holds the decoded arrays (the figure JSON sends numbers base64-packed)
    const role = r => gd._fullData.filter(t => t.meta && t.meta.role === r);
    return {title: gd.layout.title.text,
            points: role('result').reduce((n, t) => n + t.x.length, 0),
            limits: role('limit').map(t => ({table: t.meta.table, y: Array.from(t.y)}))};
}"""


def test_overview_renders_scenario_sites(page, dash_url):
    """The overview matrix lists every site of the scenario's sites file, with the caution shown."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/")
    expect(page.locator("#matrix-table")).to_be_visible(timeout=20_000)
    shown = set(page.locator("#matrix-table tbody th .site-id").all_inner_texts())
    assert shown == set(engine_view()[2]["site_id"])
    expect(page.locator("#caution")).to_be_visible()
    expect(page.locator("#status-totals")).to_contain_text("Above limit")
    _shot(page, "overview")
    assert page.js_errors == []


def test_matrix_cell_opens_site_and_metal(page, dash_url):
    """Clicking a matrix cell opens the site-and-metal chart of that site and metal."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/")
    page.locator('td[data-site="KR02"][data-analyte="zinc"] a').click()
    expect(page).to_have_url(f"{dash_url}/site?site=KR02&analyte=zinc")
    page.wait_for_function("() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
                           " return g && g.layout && g.layout.title && g.layout.title.text.includes('KR02'); }",
                           timeout=20_000)
    assert "zinc" in page.evaluate(_CHART_JS)["title"]
    assert page.js_errors == []


def test_choosing_site_and_metal_draws_points_and_limit_line(page, dash_url):
    """BH01 arsenic (total): one point per site-sample result and the WHO 10 µg/L line (WHO GDWQ 2022)."""
    page.goto(dash_url + "/site")
    page.wait_for_function("() => !!document.querySelector('#site-chart .js-plotly-plot')", timeout=20_000)
    _choose(page, "site-select", "BH01 — Ashby bore 1")
    _choose(page, "analyte-select", "arsenic")
    _choose(page, "fraction-select", "total")
    page.wait_for_function(
        "() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
        " return g && g.layout.title.text.includes('BH01') && g.layout.title.text.includes('arsenic, total'); }",
        timeout=20_000)
    chart = page.evaluate(_CHART_JS)
    acc = engine_view()[0].accepted
    expected = ((acc["site_id"] == "BH01") & (acc["analyte"] == "arsenic") & (acc["fraction"] == "total")
                & (acc["sample_type"] == "sample")).sum()
    assert chart["points"] == expected > 0
    who = [lim for lim in chart["limits"] if lim["table"] == "who_gdwq_2022"]
    assert len(who) == 1 and set(who[0]["y"]) == {10.0}
    page.locator("#site-chart").hover()
    _shot(page, "site_metal")
    assert page.js_errors == []


def test_upload_with_bad_row_shows_rejection_reason(page, dash_url, tmp_path):
    """An uploaded file's bad row is listed with the engine's reason; adding it grows the session."""
    from playwright.sync_api import expect

    from tracescreen.io.loading import load_results

    lab = tmp_path / "extra_results.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
                   "KR01,UP-1,2025-11-03,zinc,total,12,ug/L\n"
                   "KR01,UP-2,2025-11-04,zinc,total,fifteen,ug/L\n")
    reason = load_results([lab], sites=engine_view()[2], sites_name="sites.csv").rejected["reason"].iloc[0]
    page.goto(dash_url + "/upload")
    page.locator("#up-results input[type=file]").set_input_files(str(lab))
    expect(page.locator("#up-rejected-table")).to_contain_text(reason, timeout=20_000)
    expect(page.locator("#up-accepted")).to_have_text("1 accepted")
    n_before = int(engine_view()[0].accepted.shape[0])
    page.locator("#up-add").click()
    expect(page.locator("#up-added-text")).to_contain_text(f"{n_before + 1:,} results", timeout=20_000)
    expect(page.locator("#dataset-info")).to_contain_text(f"{n_before + 1:,} results")
    _shot(page, "upload")
    assert page.js_errors == []


def test_upload_over_the_cap_is_refused_with_a_message(page, dash_url, tmp_path):
    """A file above the size cap is refused in the browser with a message saying the cap."""
    from playwright.sync_api import expect

    big = tmp_path / "big.csv"
    big.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
                   + "KR01,X,2025-01-01,zinc,total,1,ug/L\n" * 4000)
    page.goto(dash_url + "/upload")
    page.locator("#up-results input[type=file]").set_input_files(str(big))
    expect(page.locator("#up-size-message")).to_contain_text("uploads are limited to 0.1 MB", timeout=10_000)
    assert page.js_errors == []


def test_exceedance_download_equals_engine_rows(page, dash_url, tmp_path):
    """The CSV download holds exactly the engine's exceeds / nondetect_inconclusive rows, as the engine writes them."""
    from playwright.sync_api import expect

    from tracescreen.report.writers import write_csv

    page.goto(dash_url + "/exceedances")
    expect(page.locator("#exc-count")).to_contain_text("rows", timeout=20_000)
    with page.expect_download() as info:
        page.locator("#exc-csv-btn").click()
    got = pd.read_csv(info.value.path(), dtype=str, keep_default_na=False)
    ref = engine_attention_rows()[list(got.columns)]
    want = pd.read_csv(write_csv(ref, tmp_path / "ref.csv"), dtype=str, keep_default_na=False)
    cols = list(got.columns)
    pd.testing.assert_frame_equal(got.sort_values(cols).reset_index(drop=True),
                                  want.sort_values(cols).reset_index(drop=True))
    with page.expect_download() as info:
        page.locator("#exc-xlsx-btn").click()
    assert len(pd.read_excel(info.value.path(), engine="openpyxl")) == len(got)
    _shot(page, "exceedances")
    assert page.js_errors == []


def test_every_page_shows_the_caution(page, dash_url):
    """Each page of the navigation renders with the caution visible and no browser errors."""
    from playwright.sync_api import expect

    from tracescreen.caution import CAUTION

    page.goto(dash_url + "/")
    links = page.locator("nav.nav a")
    expect(links.first).to_be_visible(timeout=20_000)
    targets = [(links.nth(i).inner_text(), links.nth(i).get_attribute("href")) for i in range(links.count())]
    assert len(targets) >= 8
    ready = {"/": "#matrix-table", "/map": "#map-graph .js-plotly-plot", "/site": "#site-chart .js-plotly-plot",
             "/exceedances": "#exc-table td", "/retest": ".page-header", "/quality": "#dq-files-table",
             "/limits": ".limit-table", "/upload": ".dropzone"}
    for name, href in targets:
        page.goto(dash_url + href)
        expect(page.locator("#caution")).to_be_visible(timeout=20_000)
        expect(page.locator("#caution")).to_contain_text(CAUTION)
        expect(page.locator(ready.get(href, ".page-header")).first).to_be_visible(timeout=20_000)
        _shot(page, "page_" + href.strip("/").replace("/", "_") if href != "/" else "page_overview")
    assert page.js_errors == []
