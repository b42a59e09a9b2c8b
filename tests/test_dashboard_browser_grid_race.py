"""A grid whose server is slow to answer, in headless Chromium (Debian's /usr/bin/chromium via Playwright):
two filters typed one after the other, or a download pressed while the grid still waits for its rows,
must show and download the rows of the last filter typed, never those of a superseded one.

The grid's server is made slow for one filter only (the first one typed) by wrapping the function that
selects a grid's rows; the check values come from the engine alone (dashboard_support.engine_view) and
pandas.
"""

from __future__ import annotations

import threading
import time

import pandas as pd
import pytest
from browser_support import CHROMIUM, grid_filter, serve, shot
from dashboard_support import engine_attention_rows, scenario_inputs

pytestmark = pytest.mark.browser
SLOW_S = 1.5  # how long the server takes to answer the superseded filter

if not CHROMIUM.exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed (apt-get install chromium)", allow_module_level=True)


class SlowFilter:
    """Wraps ``_shared.query_frame``: a query whose filter is exactly ``columns`` is answered ``SLOW_S`` late;
    ``done`` is set once such a late answer has been computed (so a test knows it could have arrived)."""

    def __init__(self, original, columns: set[str]) -> None:
        self.original, self.columns, self.done = original, columns, threading.Event()

    def __call__(self, session, prefix, frame_for, query_data, *args, **kwargs):
        slow = set((query_data or {}).get("filterModel") or {}) == self.columns
        if slow:
            time.sleep(SLOW_S)
        try:
            return self.original(session, prefix, frame_for, query_data, *args, **kwargs)
        finally:
            if slow:
                self.done.set()


@pytest.fixture(scope="module")
def dash_url(tmp_path_factory):
    from dashboard.app import create_app

    app = create_app(inputs=scenario_inputs(), upload_dir=tmp_path_factory.mktemp("uploads"))
    with serve(app) as url:
        yield url


@pytest.fixture
def slow_ratio(monkeypatch):
    import dashboard.pages._shared as shared

    slow = SlowFilter(shared.query_frame, {"ratio"})
    monkeypatch.setattr(shared, "query_frame", slow)
    return slow


def _open(page, dash_url, rows):
    from playwright.sync_api import expect

    page.goto(dash_url + "/exceedances")
    expect(page.locator("#exc-grid .ag-row").first).to_be_visible(timeout=30_000)
    expect(page.locator("#exc-count")).to_have_text(f"{len(rows):,} of {len(rows):,} rows", timeout=30_000)


def _download(page, button: str) -> pd.DataFrame:
    with page.expect_download(timeout=30_000) as info:
        page.locator(button).click()
    return pd.read_csv(info.value.path(), dtype={"sampled_at": str})


def _shown_column(page, col_id: str) -> list[str]:
    return page.eval_on_selector_all(f"#exc-grid .ag-row [col-id={col_id}]", "els => els.map(e => e.textContent)")


def test_two_filters_typed_quickly_show_and_download_the_last(page, dash_url, slow_ratio):
    """'> 2' under Ratio then, at once, '< 2021-01-01' under Sampled: the server answers the first filter
    after the second; the count, the rows drawn and the CSV are those of both filters (pandas on the
    engine's rows), also after the late answer has come back."""
    from playwright.sync_api import expect

    rows = engine_attention_rows()
    want = rows[(rows["ratio"] > 2) & (rows["sampled_at"] < "2021-01-01")]
    assert 0 < len(want) < (rows["ratio"] > 2).sum()  # the two filters select different rows
    _open(page, dash_url, rows)
    grid_filter(page, "exc-grid", "Ratio result/limit").fill("> 2")
    page.wait_for_timeout(100)  # a person moving to the next box, well within the filter's 350 ms pause
    grid_filter(page, "exc-grid", "Sampled").fill("< 2021-01-01")
    expect(page.locator("#exc-count")).to_have_text(f"{len(want):,} of {len(rows):,} rows", timeout=20_000)
    assert slow_ratio.done.wait(20), "the first filter was never asked for: the test did not race"
    page.wait_for_timeout(1000)  # the late answer to the first filter has had time to arrive
    expect(page.locator("#exc-count")).to_have_text(f"{len(want):,} of {len(rows):,} rows")
    dates = [d for d in _shown_column(page, "sampled_at") if d]
    assert dates and all(d < "2021-01-01" for d in dates), dates
    ratios = [float(r.replace(",", "")) for r in _shown_column(page, "ratio") if r]
    assert ratios and all(r > 2 for r in ratios), ratios
    got = _download(page, "#exc-csv-btn")
    assert len(got) == len(want)
    assert sorted(got["sample_id"].astype(str)) == sorted(want["sample_id"].astype(str))
    shot(page, "exceedances_two_filters_raced")
    assert page.js_errors == []


def test_download_pressed_while_the_grid_waits_holds_the_filter_typed(page, dash_url, slow_ratio):
    """'> 2' typed under Ratio and Download CSV pressed at once (the grid's request still on its way, or the
    box not yet applied): the file holds the rows with ratio > 2 (pandas on the engine's rows), not every
    row of the table before the filter."""
    from playwright.sync_api import expect

    rows = engine_attention_rows()
    want = rows[rows["ratio"] > 2]
    assert 0 < len(want) < len(rows)
    _open(page, dash_url, rows)
    grid_filter(page, "exc-grid", "Ratio result/limit").fill("> 2")
    got = _download(page, "#exc-csv-btn")  # pressed straight after typing: leaving the box applies it
    assert len(got) == len(want)
    assert (got["ratio"] > 2).all()
    expect(page.locator("#exc-count")).to_have_text(f"{len(want):,} of {len(rows):,} rows", timeout=20_000)
    assert page.js_errors == []
