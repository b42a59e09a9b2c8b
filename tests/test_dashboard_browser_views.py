"""The dashboard's views and conventions driven in headless Chromium as a person uses them: the address
keeps each page's state (back, reload, shared link), filters carry across pages, the navigation marks
the page, a skip link, sortable headers from the keyboard, the Trends page, the chart's labels and
hover words, the map's overlay and click, every chart's data as a table, and the caution everywhere.
Check values come from the engine alone (dashboard_support.engine_view) and published tables.
"""

from __future__ import annotations

import json
import math

import pandas as pd
import pytest
from browser_support import CHROMIUM, chart, choose, grid_filter, serve, shot
from dashboard_support import engine_view, scenario_inputs

pytestmark = pytest.mark.browser

if not CHROMIUM.exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed (apt-get install chromium)", allow_module_level=True)

#: a catchment outline and a river around the demo sites (invented, as the demo is), GeoJSON (RFC 7946)
OVERLAY = {"type": "FeatureCollection", "features": [
    {"type": "Feature", "properties": {"name": "Kestrel catchment"}, "geometry": {"type": "Polygon", "coordinates": [
        [[-3.60, 52.23], [-3.44, 52.23], [-3.44, 52.30], [-3.60, 52.30], [-3.60, 52.23]]]}},
    {"type": "Feature", "properties": {"name": "Kestrel"}, "geometry": {"type": "LineString", "coordinates": [
        [-3.5712, 52.2861], [-3.5305, 52.2731], [-3.4601, 52.2490]]}}]}


@pytest.fixture(scope="module")
def dash_url(tmp_path_factory):
    from dashboard.app import create_app

    folder = tmp_path_factory.mktemp("views")
    overlay = folder / "catchment.geojson"
    overlay.write_text(json.dumps(OVERLAY))
    app = create_app(inputs=scenario_inputs(), upload_dir=folder / "uploads", overlays=[overlay])
    with serve(app) as url:
        yield url


def _matrix(page, url):
    from playwright.sync_api import expect

    page.goto(url)
    expect(page.locator("#matrix-table")).to_be_visible(timeout=30_000)


def test_address_keeps_the_view_back_reload_and_carries_filters(page, dash_url):
    """Choosing a fraction writes it into the address; the map opened from the navigation has the same
    filter; Back returns to the overview as it was; a reload and a shared link show the same view."""
    from playwright.sync_api import expect

    _matrix(page, dash_url + "/")
    choose(page, "ov-fraction", "dissolved")
    expect(page).to_have_url(f"{dash_url}/?fraction=dissolved", timeout=10_000)
    page.get_by_role("radio", name="latest campaign").check()
    expect(page).to_have_url(f"{dash_url}/?fraction=dissolved&view=latest", timeout=10_000)
    page.locator("#nav-map").click()
    expect(page).to_have_url(f"{dash_url}/map?fraction=dissolved", timeout=10_000)
    expect(page.locator("#mp-fraction")).to_contain_text("dissolved")
    page.go_back()
    expect(page).to_have_url(f"{dash_url}/?fraction=dissolved&view=latest", timeout=10_000)
    expect(page.locator("#ov-fraction")).to_contain_text("dissolved", timeout=10_000)
    expect(page.get_by_role("radio", name="latest campaign")).to_be_checked()
    page.reload()
    expect(page.locator("#matrix-table")).to_be_visible(timeout=30_000)
    expect(page.locator("#ov-fraction")).to_contain_text("dissolved")
    # the cells are the dissolved results only (the engine's rows of that fraction)
    acc = engine_view()[0].accepted
    n = ((acc["site_id"] == "KR02") & (acc["analyte"] == "zinc") & (acc["fraction"] == "dissolved")
         & (acc["sample_type"] == "sample")).sum()
    assert int(page.locator('td[data-site="KR02"][data-analyte="zinc"]').get_attribute("data-n")) == n
    assert page.js_errors == []


def test_grid_filter_survives_back_and_a_shared_link(page, dash_url):
    """The exceedance grid's typed filter is in the address: a new browser page on that address shows it."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/exceedances")
    expect(page.locator("#exc-grid .ag-row").first).to_be_visible(timeout=30_000)
    grid_filter(page, "exc-grid", "Ratio result/limit").fill(">= 3")
    page.wait_for_function("() => location.search.includes('exc_filter')", timeout=10_000)
    shared, count = page.url, page.locator("#exc-count").inner_text()
    page.goto(dash_url + "/limits")
    page.go_back()
    expect(page.locator("#exc-count")).to_have_text(count, timeout=20_000)
    page.goto(shared)
    expect(page.locator("#exc-count")).to_have_text(count, timeout=20_000)
    expect(grid_filter(page, "exc-grid", "Ratio result/limit")).to_have_value(">= 3")
    assert page.js_errors == []


def test_navigation_marks_the_page_skip_link_and_error_page(page, dash_url):
    """The navigation marks the page shown (aria-current); the first Tab reaches a skip link to the content;
    an unknown address gets a page saying so, with the pages listed."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/limits")
    expect(page.locator("#nav-limits")).to_have_attribute("aria-current", "page", timeout=20_000)
    expect(page.locator("#nav-limits")).to_have_class("nav-link active")
    assert page.locator("#nav-overview").get_attribute("aria-current") is None
    page.keyboard.press("Tab")
    skip = page.locator(".skip-link").first
    expect(skip).to_be_focused()
    expect(skip).to_be_in_viewport()
    page.goto(dash_url + "/no-such-page")
    expect(page.locator("#not-found")).to_contain_text("There is no page at this address", timeout=20_000)
    expect(page.locator("#caution")).to_be_visible()
    assert page.js_errors == []


def test_headers_sort_from_the_keyboard(page, dash_url):
    """A header reached with the keyboard sorts on Enter (the grid asks the server for sorted rows)."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/exceedances")
    expect(page.locator("#exc-grid .ag-row").first).to_be_visible(timeout=30_000)
    header = page.locator('#exc-grid [role=columnheader][col-id="ratio"]')
    header.focus()
    page.keyboard.press("Enter")
    expect(header).to_have_attribute("aria-sort", "ascending", timeout=10_000)
    page.wait_for_function("() => location.search.includes('exc_sort')", timeout=10_000)
    lowest = engine_view()[3]
    lowest = lowest[lowest["status"].isin(["exceeds", "nondetect_inconclusive", "above_range_inconclusive"])
                    & (lowest["sample_type"] == "sample")]["ratio"].min()
    first = page.evaluate("() => dash_ag_grid.getApi('exc-grid').getDisplayedRowAtIndex(0).data.ratio")
    assert first == pytest.approx(lowest)
    assert page.js_errors == []


def test_column_chooser_shows_a_hidden_column_and_key_columns_stay_frozen(page, dash_url):
    """"Columns" lists the columns that are not frozen: unticking Unit hides it, ticking Source (hidden at
    first) shows it; Site, Sampled and Metal stay at the left when the grid is scrolled to its last column
    (README.md#dashboard, "Tables")."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/exceedances")
    expect(page.locator("#exc-grid .ag-row").first).to_be_visible(timeout=30_000)
    header = '#exc-grid [role=columnheader][col-id="{}"]'
    shown = "(c) => dash_ag_grid.getApi('exc-grid').getColumn(c).isVisible()"
    assert page.evaluate(shown, "unit") and not page.evaluate(shown, "source")
    page.locator("#exc-grid-columns").locator("xpath=..").locator("summary").click()
    page.get_by_label("Source", exact=True).check()
    page.get_by_label("Unit", exact=True).uncheck()
    page.wait_for_function(f"() => ({shown})('source') && !({shown})('unit')", timeout=10_000)
    # the grid draws only the columns in view (column virtualisation): scroll to Source as a person would
    page.evaluate("() => dash_ag_grid.getApi('exc-grid').ensureColumnVisible('source')")
    expect(page.locator(header.format("source"))).to_be_visible(timeout=10_000)
    expect(page.locator(header.format("unit"))).to_have_count(0)
    for key in ("site_id", "sampled_at", "analyte"):
        expect(page.locator(f"#exc-grid .ag-pinned-left-header {header.format(key)[9:]}")).to_be_visible()
    shot(page, "exceedances_columns_chosen")
    assert page.js_errors == []


def test_overview_cells_carry_the_engines_trend_arrows(page, dash_url):
    """A cell shows ↑ / ↓ exactly where the engine's trend table (pipeline.trends, the same table as
    trends.csv) finds a significant increase / decrease for that site and metal (README.md#dashboard)."""
    from playwright.sync_api import expect

    from tracescreen import pipeline
    from tracescreen.statistics.options import StatisticsOptions

    loaded, _, _, screened = engine_view()
    table = pipeline.trends(loaded.accepted, screened, StatisticsOptions())
    moving = table[table["direction"].isin(["increasing", "decreasing"])]
    want = {(str(r.site_id), str(r.analyte)): set() for r in moving.itertuples()}
    for r in moving.itertuples():
        want[(str(r.site_id), str(r.analyte))].add("↑" if r.direction == "increasing" else "↓")
    assert want  # the demo has trends to show
    _matrix(page, dash_url)
    expect(page.locator("#matrix-table .trend-arrow").first).to_be_visible(timeout=60_000)  # worker thread
    got = page.eval_on_selector_all(
        "#matrix-table td.cell", "els => els.map(e => [e.dataset.site, e.dataset.analyte,"
        " (e.querySelector('.trend-arrow') || {}).textContent || ''])")
    shown = {(s, a): {c for c in text if c in "↑↓"} for s, a, text in got if text}
    assert shown == want
    assert page.js_errors == []


def test_trends_page_lists_every_series_and_opens_its_chart(page, dash_url):
    """The Trends page is the engine's trend table (one row per series, README.md#dashboard); the crossing
    date carries its caution; filtering the direction and following a row's link opens that series."""
    from playwright.sync_api import expect

    from tracescreen import pipeline
    from tracescreen.statistics.options import StatisticsOptions

    loaded, _, _, screened = engine_view()
    table = pipeline.trends(loaded.accepted, screened, StatisticsOptions())
    page.goto(dash_url + "/trends")
    expect(page.locator("#tr-caution")).to_contain_text("not a forecast")
    expect(page.locator("#tr-count")).to_contain_text(f"of {len(table):,} rows", timeout=60_000)
    grid_filter(page, "tr-grid", "Direction").fill("increasing")
    rising = (table["direction"] == "increasing").sum()
    expect(page.locator("#tr-count")).to_have_text(f"{rising:,} of {len(table):,} rows", timeout=10_000)
    with page.expect_download(timeout=30_000) as info:  # the CSV holds the rows on screen
        page.locator("#tr-csv-btn").click()
    got = pd.read_csv(info.value.path())
    assert len(got) == rising and set(got["direction"]) == {"increasing"}
    row = page.evaluate("() => dash_ag_grid.getApi('tr-grid').getDisplayedRowAtIndex(0).data")
    page.locator("#tr-grid .ag-row").first.locator("a", has_text="chart").click()
    page.wait_for_function("() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
                           " return g && g.layout && g.layout.title && g.layout.title.text; }", timeout=20_000)
    assert f"({row['site_id']}) · {row['analyte']}, {row['fraction']}" in chart(page)["title"]
    shot(page, "trends_to_chart")
    assert page.js_errors == []


def test_chart_labels_limits_hover_words_log_decades_and_data_table(page, dash_url):
    """BH01 arsenic (total): the WHO, EU and US EPA 10 µg/L limits are one line naming every table (WHO GDWQ
    2022; EU Directive 98/83/EC and 2020/2184; US EPA MCL 0.010 mg/L); a non-detect reads 'not detected, DL
    ...'; the log axis labels are full numbers (1, 2, 5 of a decade), never a mantissa; the data-as-a-table view lists
    every point."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/site?site=BH01&analyte=arsenic&fraction=total&scale=log")
    page.wait_for_function("() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
                           " return g && g._fullData && g.layout.title && (g.layout.title.text || '').includes('BH01'); }", timeout=30_000)
    c = chart(page)
    ten = [lim for lim in c["limits"] if set(lim["y"]) == {10.0}]
    assert len(ten) == 1 and {"who_gdwq_2022", "eu_dwd_98_83"} <= set(ten[0]["tables"]), c["limits"]
    assert "10 µg/L" in ten[0]["name"]
    nd = [p for p in c["custom"] if p[2].startswith("not detected")]
    assert nd and all(p[2].startswith("not detected, DL ") and p[2].endswith(" µg/L") for p in nd)
    ticks = [float(t.replace(",", "")) for t in c["ticktext"]]  # every label is the full value it marks
    mantissas = {round(t / 10 ** math.floor(math.log10(t)), 9) for t in ticks}
    assert len(ticks) >= 2 and mantissas <= {1.0, 2.0, 5.0} and 10.0 in ticks
    page.locator("#site-table-btn").click()
    expect(page.locator("#site-table-grid .ag-row").first).to_be_visible(timeout=10_000)
    n_rows = page.evaluate("() => dash_ag_grid.getApi('site-table-grid').getDisplayedRowCount()")
    assert n_rows == c["points"]
    shot(page, "site_log_bh01_arsenic")
    assert page.js_errors == []


def test_a_series_without_a_limit_keeps_its_shapes_and_says_why(page, dash_url):
    """KR01 (Kestrel Springs, freshwater_aquatic use in the demo's sites.csv), total chromium: the shipped
    tables that list total chromium protect drinking water (WHO GDWQ 2022, EU 98/83/EC and 2020/2184, US EPA
    NPDWR), while the US EPA aquatic life criteria list chromium(III) and chromium(VI) only. No line is
    drawn, the page says why in those words, and detected and non-detect results keep filled and open shapes."""
    from playwright.sync_api import expect

    page.goto(dash_url + "/site?site=KR01&analyte=chromium&fraction=total")
    expect(page.locator("#site-no-limit")).to_contain_text("No limit applies", timeout=30_000)
    words = page.locator("#site-no-limit").inner_text()
    assert "protect drinking_water" in words and "this site's uses are freshwater_aquatic" in words, words
    page.wait_for_function("() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
                           " return g && g._fullData && (g.layout.title.text || '').includes('KR01'); }", timeout=30_000)
    c = chart(page)
    assert c["limits"] == [] and c["points"] > 0
    points = page.evaluate("""() => document.querySelector('#site-chart .js-plotly-plot')._fullData
        .filter(t => t.meta && t.meta.role === 'result').flatMap(t => t.customdata.map((d, i) =>
            [d[2], String(Array.isArray(t.marker.symbol) ? t.marker.symbol[i] : t.marker.symbol)]))""")
    opened = {words.startswith("not detected"): [] for words, _ in points}
    for words, symbol in points:
        opened[words.startswith("not detected")].append(symbol.endswith("-open"))
    assert opened.get(False) and not any(opened[False]), points  # detected: filled
    assert opened.get(True) and all(opened[True]), points  # not detected: open
    assert page.js_errors == []


def test_period_limits_are_drawn_with_their_period_values(page, dash_url):
    """A running annual mean limit (US EPA NPDWR: MCL compliance on the running annual average, 40 CFR 141.23)
    is drawn with the running means it is compared with, apart from the single results."""
    screened = engine_view()[3]
    ram = screened[(screened["basis"] == "running_annual_mean") & (screened["sample_type"] == "sample")]
    site, analyte, fraction = ram.iloc[0][["site_id", "analyte", "fraction"]]
    page.goto(dash_url + f"/site?site={site}&analyte={analyte}&fraction={fraction}")
    page.wait_for_function("() => { const g = document.querySelector('#site-chart .js-plotly-plot');"
                           " return g && g._fullData && g._fullData.length; }", timeout=30_000)
    assert chart(page)["periods"] >= 1
    assert page.js_errors == []


def test_map_draws_the_overlay_without_tiles_and_a_click_opens_the_site(page, dash_url):
    """The GeoJSON given at start is drawn under the sites (no tile server is asked); clicking a site opens its chart."""

    requests = []
    page.on("request", lambda r: requests.append(r.url))
    page.goto(dash_url + "/map")
    page.wait_for_function("() => { const g = document.querySelector('#map-graph .js-plotly-plot');"
                           " return g && g._fullData && g._fullData.length > 0; }", timeout=30_000)
    assert chart(page, "map-graph")["overlays"] == 2  # the catchment outline and the river
    assert all(u.startswith(dash_url) or u.startswith("data:") for u in requests)
    point = page.locator("#map-graph .scatterlayer .trace .points path").last
    point.click(force=True)
    page.wait_for_function("() => location.pathname === '/site'", timeout=20_000)
    assert "site=" in page.url
    shot(page, "map_click_site")
    assert page.js_errors == []


def test_every_page_shows_the_caution_and_draws(page, dash_url):
    """Each page of the navigation renders with the caution visible and no browser errors."""
    from playwright.sync_api import expect

    from tracescreen.caution import CAUTION

    page.goto(dash_url + "/")
    links = page.locator("nav.nav a")
    expect(links.first).to_be_visible(timeout=20_000)
    targets = [(links.nth(i).inner_text(), links.nth(i).get_attribute("href")) for i in range(links.count())]
    assert len(targets) >= 9
    ready = {"/": "#matrix-table", "/map": "#map-graph .js-plotly-plot", "/site": "#site-chart .js-plotly-plot",
             "/trends": "#tr-grid", "/exceedances": "#exc-grid .ag-row", "/retest": "#rq-grid .ag-row",
             "/quality": "#dq-files-table", "/limits": ".limit-table", "/upload": ".dropzone"}
    for _name, href in targets:
        page.goto(dash_url + href)
        expect(page.locator("#caution")).to_contain_text(CAUTION, timeout=20_000)
        expect(page.locator(ready.get(href.split("?")[0], ".page-header")).first).to_be_visible(timeout=30_000)
        shot(page, "page_" + (href.strip("/").split("?")[0] or "overview"))
    assert page.js_errors == []


def test_a_failing_view_says_what_went_wrong(page, dash_url, monkeypatch):
    """A callback that fails shows a banner saying what went wrong; the rest of the page still works."""
    import sys

    from playwright.sync_api import expect

    def broken(_session):
        raise RuntimeError("the limit tables could not be shown")

    monkeypatch.setattr(sys.modules["pages.limits"], "table_sections", broken)
    page.goto(dash_url + "/limits")
    expect(page.locator("#error-banner")).to_contain_text("Something went wrong: the limit tables could not be shown",
                                                          timeout=20_000)
    expect(page.locator("#caution")).to_be_visible()
    page.locator("#nav-overview").click()
    expect(page.locator("#matrix-table")).to_be_visible(timeout=30_000)
    expect(page.locator("#error-banner")).to_have_text("")
    page.js_errors.clear()  # the failed request is logged by the browser as a 500; that is the point here
