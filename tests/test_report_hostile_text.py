"""Script payloads in every user field that reaches the report: escaped in HTML, Word and PDF, never run.

A limit table's `url: "javascript:..."` used to become a live link in the HTML report that ran when clicked.
The report is opened in headless Chromium (Debian's /usr/bin/chromium via Playwright) with dialog and
console hooks; every link is clicked. Sources of the payloads: tests/hostile_inputs.py (OWASP XSS
prevention cheat sheet, common practice); of the Word format: ECMA-376 (a hyperlink is a relationship with
a target; text is XML-escaped).
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import pytest
from hostile_inputs import JS_URL, PAYLOADS, PROBE, write_hostile_inputs

from tracescreen.cli import main

pytestmark = pytest.mark.browser
playwright = pytest.importorskip("playwright.sync_api")
CHROME_FLAGS = ["--disable-gpu", "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]

if not Path("/usr/bin/chromium").exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed", allow_module_level=True)


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    f = write_hostile_inputs(folder)
    out = folder / "report.html"
    argv = ["report", str(f["lab"]), "--limits", str(f["limits"]), "--sites", str(f["sites"]), "--out", str(out),
            "--docx", str(folder / "report.docx"), "--pdf", str(folder / "report.pdf"),
            "--title", PAYLOADS[0], "--charts", "all"]
    assert main(argv) == 0
    return folder


def test_html_report_shows_payloads_as_text_and_runs_none(report):
    html = (report / "report.html").read_text(encoding="utf-8")
    for p in PAYLOADS:
        assert p not in html  # never raw
    assert "&lt;script&gt;window.__xss=1" in html  # shown, escaped
    assert 'href="javascript' not in html.lower() and "href='javascript" not in html.lower()
    dialogs, errors = [], []
    with playwright.sync_playwright() as pw:
        b = pw.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
        page = b.new_page()
        page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
        page.on("console", lambda m: m.type == "error" and errors.append(m.text))
        page.on("pageerror", lambda e: errors.append(str(e)))
        page.goto((report / "report.html").as_uri())
        page.wait_for_load_state("load")
        probe = page.evaluate(PROBE)
        for link in page.locator("a[href]").all()[:200]:  # click every link: none may run anything
            href = link.get_attribute("href") or ""
            if href.startswith("#"):
                link.click()
        probe_after = page.evaluate(PROBE)
        assert page.get_by_text(PAYLOADS[0]).count() >= 1  # the payload is visible as text
        b.close()
    assert dialogs == [] and probe["ran"] is None and probe_after["ran"] is None, (dialogs, probe)
    assert probe["scriptLinks"] == 0 and probe["handlers"] == 0
    assert errors == []
    assert JS_URL.replace("&", "&amp;") in html or "javascript:window.__xss=5" in html  # the address, as text


def test_word_document_escapes_payloads_and_links_nothing_unsafe(report):
    with zipfile.ZipFile(report / "report.docx") as z:
        body = z.read("word/document.xml").decode("utf-8")
        rels = "".join(z.read(n).decode("utf-8") for n in z.namelist() if n.endswith(".rels"))
    assert "<script>" not in body and "&lt;script&gt;window.__xss=1" in body
    assert "javascript:" not in rels.lower()


def test_pdf_has_no_script_or_script_link(report):
    pdf = (report / "report.pdf").read_bytes()
    assert b"/JavaScript" not in pdf and b"/JS " not in pdf and b"/JS(" not in pdf
    assert b"/URI (javascript" not in pdf.replace(b"\n", b" ").lower()
