"""Script payloads in every user field that reaches a dashboard page: shown as text, never run.

The dashboard runs on inputs whose site ids and names, sample ids, qualifiers, labs, batches, limit-table
name, source, url, notes and entry note, rejected and set-aside cells and an uploaded file's name and
cells all carry payloads (tests/hostile_inputs.py). Every page is visited and the site chart drawn for
the payload site, in headless Chromium (Debian's /usr/bin/chromium via Playwright) with dialog, console
and page-error hooks; ``window.__xss`` stays unset, no link has a script address.
"""

from __future__ import annotations

import threading
from pathlib import Path

import pytest
from hostile_inputs import PAYLOADS, PROBE, write_hostile_inputs

pytestmark = pytest.mark.browser
CHROME_FLAGS = ["--disable-gpu", "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]

if not Path("/usr/bin/chromium").exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed", allow_module_level=True)


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    return write_hostile_inputs(tmp_path_factory.mktemp("hostile"))


@pytest.fixture(scope="module")
def dash_url(hostile, tmp_path_factory):
    from werkzeug.serving import make_server

    from dashboard.app import create_app

    app = create_app([hostile["lab"]], [hostile["limits"]], hostile["sites"],
                     upload_dir=tmp_path_factory.mktemp("uploads"))
    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_port}"
    server.shutdown()
    thread.join(5)


def test_no_payload_runs_on_any_page(dash_url, hostile, tmp_path):
    from playwright.sync_api import expect, sync_playwright

    dialogs, errors, seen = [], [], {}
    with sync_playwright() as pw:
        b = pw.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
        page = b.new_page(viewport={"width": 1280, "height": 900})
        page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
        page.on("console", lambda m: m.type == "error" and errors.append(m.text))
        page.on("pageerror", lambda e: errors.append(str(e)))
        ready = {"/": "#matrix-table", "/map": "#map-graph .js-plotly-plot", "/exceedances": "#exc-grid .ag-row",
                 "/retest": ".page-header", "/quality": "#dq-files-table", "/limits": ".limit-table",
                 "/upload": ".dropzone"}
        for path, selector in ready.items():
            page.goto(dash_url + path)
            expect(page.locator(selector).first).to_be_visible(timeout=30_000)
            page.wait_for_timeout(500)
            seen[path] = page.evaluate(PROBE)
            for d in page.locator("details").all():  # open every folded block (limit entries)
                d.evaluate("el => el.open = true")
            page.mouse.move(300, 300)
        # the site chart of the payload site (hover texts, titles)
        page.goto(dash_url + "/site")
        page.locator("#site-select").click()
        page.get_by_role("option").filter(has_text="window.__xss").first.click()
        page.keyboard.press("Escape")
        expect(page.locator("#site-chart .js-plotly-plot")).to_be_visible(timeout=30_000)
        page.wait_for_timeout(1500)
        seen["/site"] = page.evaluate(PROBE)
        # the limit tables page shows the script address as text, not a link
        page.goto(dash_url + "/limits")
        expect(page.locator(".limit-table").first).to_be_visible(timeout=30_000)
        assert page.get_by_text("not a web address: shown as text").count() >= 1
        assert page.get_by_text(PAYLOADS[0] + " table").count() >= 1
        # an upload whose name and cells carry payloads
        up = tmp_path / "up.csv"
        up.write_text(hostile["lab"].read_text(encoding="utf-8").replace("2023-", "2024-"), encoding="utf-8")
        page.goto(dash_url + "/upload")
        page.locator("#up-results input[type=file]").set_input_files(
            files=[{"name": PAYLOADS[1][:60] + ".csv", "mimeType": "text/csv", "buffer": up.read_bytes()}])
        expect(page.locator("#up-accepted")).to_be_visible(timeout=30_000)
        expect(page.locator("#up-preview")).to_contain_text("8 rows read")  # rows read = accepted + set aside + rejected
        page.wait_for_timeout(500)
        seen["/upload (preview)"] = page.evaluate(PROBE)
        page.screenshot(path=str(tmp_path / "upload.png"), full_page=True)
        b.close()
    assert dialogs == [], dialogs
    assert all(v["ran"] is None and v["scriptLinks"] == 0 and v["handlers"] == 0 for v in seen.values()), seen
    assert [e for e in errors if "__xss" in e or "javascript:" in e] == [], errors
