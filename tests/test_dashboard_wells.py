"""The Wells page: its view functions on the demo scenario (checked against the engine's own
tables), and the page driven in headless Chromium as a person does (choose a well, read the chart)."""

from __future__ import annotations

import threading
from pathlib import Path

import pytest
from dashboard_support import ROOT, scenario_paths

SHOTS = ROOT / "test-output" / "screenshots"


def _wells_options():
    from tracescreen.io.network import read_design, read_network
    from tracescreen.pipeline import WellsOptions
    from tracescreen.statistics.background.design import Design

    return WellsOptions(read_network(ROOT / "scenario_data/network.csv"),
                        Design.from_mapping(read_design(ROOT / "scenario_data/design.yaml")))


@pytest.fixture(scope="module")
def wells_inputs():
    from dashboard.state.store import load_inputs

    p = scenario_paths()
    return load_inputs(p["results"], p["limits"], p["sites"], p["columns"], wells=_wells_options())


def test_views_match_the_engine_tables(wells_inputs):
    """The page's tables are the engine's (tracescreen wells on the same inputs): the same statuses
    per well, the wells needing attention listed first, and every field of the limit shown."""
    from dashboard.state.session import build_session
    from dashboard.views.wells import LIMIT_FACTS, SEP, series_options, series_view, wells_tables
    from tracescreen import pipeline

    session = build_session(wells_inputs)
    tables = wells_tables(session)
    engine = pipeline.wells(wells_inputs.accepted, None, _wells_options())
    assert tables["well_status"]["latest_status"].tolist() == engine["well_status"]["latest_status"].tolist()
    options = series_options(tables)
    assert len(options) == len(engine["well_status"]) and "confirmed exceedance" in options[0]["label"]
    view = series_view(tables, options[0]["value"])
    assert [f["setting"] for f in view["facts"]] == [label for _, label in LIMIT_FACTS]
    site = options[0]["value"].split(SEP)[0]
    assert view["figure"].layout.title.text.startswith(site) and view["sequence"]


def test_without_a_network_the_page_says_how_to_give_one(wells_inputs, tmp_path):
    """A dashboard started without --network shows how to give one on the Wells page."""
    import sys
    from dataclasses import replace
    from unittest import mock

    import dash

    from dashboard.app import create_app

    create_app(inputs=replace(wells_inputs, wells=None), upload_dir=tmp_path, preload=False)
    page = next(sys.modules[p["module"]] for p in dash.page_registry.values() if p["path"] == "/wells")

    with mock.patch.object(page, "current_session"), mock.patch.object(page, "wells_tables", return_value=None):
        text = str(page.layout())
    assert "--network network.csv" in text


@pytest.mark.browser
def test_wells_page_in_the_browser(wells_inputs, tmp_path):
    """Choose a well and constituent in the real dropdown: the chart redraws with its background,
    limit and retest statuses, the status line and the sequence table follow, no browser error."""
    if not Path("/usr/bin/chromium").exists():  # pragma: no cover - .ci/run installs it
        pytest.skip("Debian chromium is not installed")
    from playwright.sync_api import expect, sync_playwright
    from werkzeug.serving import make_server

    from dashboard.app import create_app

    app = create_app(inputs=wells_inputs, upload_dir=tmp_path)
    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path="/usr/bin/chromium", headless=True,
                                        args=["--disable-gpu", "--host-resolver-rules=MAP * ~NOTFOUND , "
                                              "EXCLUDE localhost , EXCLUDE 127.0.0.1"])
            page = browser.new_page(viewport={"width": 1280, "height": 900})
            errors = []
            page.on("pageerror", lambda e: errors.append(str(e)))
            page.on("console", lambda m: m.type == "error" and errors.append(m.text))
            page.goto(f"http://127.0.0.1:{server.server_port}/wells")
            expect(page.locator("#wells-chart .js-plotly-plot")).to_be_visible(timeout=60_000)
            expect(page.locator("#caution")).to_be_visible()
            page.locator("#wells-series").click()
            page.get_by_role("option", name="BH02 · uranium (total) · confirmed exceedance", exact=True).click()
            expect(page.locator("#wells-status")).to_contain_text("Confirmed exceedance of background")
            expect(page.locator("#wells-chart .gtitle").first).to_contain_text("BH02: uranium (total)")
            expect(page.locator("#wells-sequence")).to_contain_text("confirmed_exceedance")
            page.locator("summary", has_text="Statistical design").click()
            expect(page.locator("#wells-design")).to_contain_text("SWFPR")
            SHOTS.mkdir(parents=True, exist_ok=True)
            page.screenshot(path=str(SHOTS / "wells.png"), full_page=True)
            # the Site & metal chart of a compliance well carries its background limit and a link here
            page.goto(f"http://127.0.0.1:{server.server_port}/site?site=BH01&analyte=arsenic&fraction=total")
            expect(page.locator("#site-wells")).to_contain_text("Against background (interwell", timeout=60_000)
            expect(page.locator("#site-chart .legend")).to_contain_text("background prediction limit")
            page.screenshot(path=str(SHOTS / "site_with_background_limit.png"), full_page=True)
            page.get_by_role("link", name="open on the Wells page").click()
            expect(page.locator("#wells-status")).to_contain_text("Evaluations", timeout=60_000)
            expect(page.locator("#wells-chart .gtitle").first).to_contain_text("BH01: arsenic (total)")
            browser.close()
        assert errors == []
    finally:
        server.shutdown()
        thread.join(5)
