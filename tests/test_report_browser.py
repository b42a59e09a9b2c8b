"""The HTML report in headless Chromium (Playwright driving Debian's /usr/bin/chromium, no network)."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tracescreen.caution import CAUTION
from tracescreen.report.html import SECTIONS
from tracescreen.report.tables import STATUS_ORDER

pytestmark = pytest.mark.browser
playwright = pytest.importorskip("playwright.sync_api")

CHROME_FLAGS = ["--disable-gpu",
                "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]
SHOTS = Path(__file__).resolve().parents[1] / "test-output"


@pytest.fixture(scope="module")
def page(demo_report):
    """The demo report opened from file://; every request other than the file itself is aborted and recorded."""
    with playwright.sync_playwright() as p:
        browser = p.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
        ctx = browser.new_context(viewport={"width": 1280, "height": 900})
        pg = ctx.new_page()
        pg.js_errors, pg.outside = [], []
        pg.on("pageerror", lambda e: pg.js_errors.append(str(e)))
        pg.on("console", lambda m: m.type == "error" and pg.js_errors.append(m.text))

        def route(r):
            if r.request.url.startswith("file://"):
                r.continue_()
            else:
                pg.outside.append(r.request.url)
                r.abort()
        ctx.route("**/*", route)
        pg.goto(demo_report["html"].as_uri())
        pg.wait_for_selector(".js-plotly-plot .main-svg")
        SHOTS.mkdir(exist_ok=True)
        pg.screenshot(path=str(SHOTS / "report-first-screen.png"))
        yield pg
        ctx.close()
        browser.close()


def _table(page, table_id) -> pd.DataFrame:
    head = page.eval_on_selector_all(f"#{table_id} thead th", "ths => ths.map(t => t.textContent)")
    body = page.eval_on_selector_all(f"#{table_id} tbody tr",
                                     "rows => rows.map(r => Array.from(r.cells).map(c => c.textContent))")
    return pd.DataFrame(body, columns=head)


def test_opens_offline_with_caution_on_first_screen(page):
    """The caution is visible within the first 1280×900 screen; no request leaves the file; no script errors."""
    caution = page.locator("#caution")
    assert caution.is_visible()
    assert CAUTION in caution.inner_text()
    box = caution.bounding_box()
    assert box["y"] + box["height"] <= 900
    assert page.outside == []
    assert page.js_errors == []


def test_every_section_present(page):
    """Every section of README.md#site-summary-report is on the page with its heading, in order."""
    tops = []
    for sid, title in SECTIONS:
        sec = page.locator(f"section#{sid}")
        assert sec.count() == 1
        assert sec.locator("h2").inner_text() == title
        tops.append(sec.bounding_box()["y"])
    assert tops == sorted(tops)


def test_charts_render_one_per_analyte_and_fraction(page, demo_screen_dir):
    """plotly.js (inlined) draws one chart per analyte and fraction of the site samples in screening.csv."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype=str, keep_default_na=False)
    site = scr[scr["sample_type"].eq("sample")]
    expected = len(site[["analyte", "fraction"]].drop_duplicates())
    assert page.evaluate("typeof Plotly") == "object"
    assert page.locator("#charts .js-plotly-plot").count() == expected
    assert page.locator("#charts .js-plotly-plot .main-svg").count() >= expected


def test_exceedance_numbers_equal_screening_csv(page, demo_screen_dir):
    """The exceedances table shows the screening.csv `exceeds` rows, values and limits equal to 6 significant figures."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype={"sample_id": str})
    exc = scr[scr["status"].eq("exceeds")]
    shown = _table(page, "exceedances-table")
    key = ["site_id", "sample_id", "analyte", "fraction", "limit_table"]
    exc = exc.sort_values(key + ["limit_ug_L"]).reset_index(drop=True)
    shown = shown.assign(limit_ug_L=shown["limit_ug_L"].astype(float), value_ug_L=shown["value_ug_L"].astype(float))
    shown = shown.sort_values(key + ["limit_ug_L"]).reset_index(drop=True)
    assert len(shown) == len(exc) > 0
    assert (shown[key].to_numpy() == exc[key].astype(str).to_numpy()).all()
    np.testing.assert_allclose(shown["value_ug_L"], exc["value_ug_L"], rtol=1e-5)  # shown to 6 significant figures
    np.testing.assert_allclose(shown["limit_ug_L"], exc["limit_ug_L"], rtol=1e-5)


def test_status_matrix_counts_equal_screening_csv(page, demo_screen_dir):
    """Each matrix cell 'status k/n' equals the count recomputed from screening.csv (worst status of each result)."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype=str, keep_default_na=False)
    site = scr[scr["sample_type"].eq("sample")].copy()
    site["rank"] = site["status"].map({s: i for i, s in enumerate(STATUS_ORDER)})
    worst = site.groupby(["file", "sheet", "row", "site_id", "analyte", "fraction"])["rank"].min().reset_index()
    shown = _table(page, "status-matrix").set_index("site_id")
    checked = 0
    for (sid, analyte, fraction), g in worst.groupby(["site_id", "analyte", "fraction"]):
        w = g["rank"].min()
        expected = f"{STATUS_ORDER[w]} {int((g['rank'] == w).sum())}/{len(g)}"
        assert shown.loc[sid, f"{analyte} ({fraction})"] == expected
        checked += 1
    assert checked == (shown != "").to_numpy().sum()


def test_retest_and_rejected_rows_equal_csv(page, demo_screen_dir):
    """The retest list and rejected rows on the page have as many rows as retest.csv and rejected.csv, same reasons."""
    for table_id, name in (("retest-table", "retest"), ("rejected-table", "rejected")):
        csv = pd.read_csv(demo_screen_dir / f"{name}.csv", dtype=str, keep_default_na=False)
        shown = _table(page, table_id)
        assert len(shown) == len(csv)
        assert sorted(shown["reason"]) == sorted(csv["reason"])


@pytest.mark.parametrize("table_id, name", [("summary-table", "summary"), ("trends-table", "trends")])
def test_statistics_numbers_equal_csv(page, demo_screen_dir, table_id, name):
    """Summary and trend tables on the page equal summary.csv / trends.csv of `screen` (numbers to 6 significant figures)."""
    csv = pd.read_csv(demo_screen_dir / f"{name}.csv")
    shown = _table(page, table_id)
    assert list(shown.columns) == list(csv.columns) and len(shown) == len(csv) > 0
    for c in csv.columns:
        if pd.api.types.is_numeric_dtype(csv[c]):
            np.testing.assert_allclose(pd.to_numeric(shown[c].replace("", np.nan)), csv[c], rtol=1e-5, err_msg=c)
        else:
            assert (shown[c] == csv[c].fillna("").astype(str)).all(), c


def test_methods_named(page):
    """The summaries name the non-detect method and the trends name the test used (README.md#site-summary-report)."""
    assert "Non-detect method: kaplan_meier" in page.locator("#summaries").inner_text()
    assert "Test used:" in page.locator("#trends").inner_text()
