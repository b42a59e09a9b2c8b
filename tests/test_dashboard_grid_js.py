"""The comparison typed under a number or date heading (``dashboard/assets/grid.js``), read in the browser
(headless Chromium, Debian's /usr/bin/chromium via Playwright): each text -> the AG Grid filter model the
server applies (model shapes as AG Grid documents them for ag-grid-community 35: ``filterType``, ``type``,
``filter``/``filterTo``, ``dateFrom``/``dateTo`` as "YYYY-MM-DD hh:mm:ss"). The readings of ``> 2``,
``2 - 5`` and a year as its first and last day are the page's own rules (README.md#dashboard, "Tables").
"""

from __future__ import annotations

import pytest
from browser_support import CHROMIUM, chromium, new_page, serve
from dashboard_support import scenario_inputs

pytestmark = pytest.mark.browser

if not CHROMIUM.exists():  # pragma: no cover - .ci/run installs it
    pytest.skip("Debian chromium is not installed (apt-get install chromium)", allow_module_level=True)

NUMBERS = [
    ("> 2", {"filterType": "number", "type": "greaterThan", "filter": 2, "filterTo": None}),
    ("<=0.5", {"filterType": "number", "type": "lessThanOrEqual", "filter": 0.5, "filterTo": None}),
    ("1,000", {"filterType": "number", "type": "equals", "filter": 1000, "filterTo": None}),
    ("!= 3", {"filterType": "number", "type": "notEqual", "filter": 3, "filterTo": None}),
    ("2 - 5", {"filterType": "number", "type": "inRange", "filter": 2, "filterTo": 5}),
    ("1e-3 to 2", {"filterType": "number", "type": "inRange", "filter": 0.001, "filterTo": 2}),
    ("-1.5 - 0", {"filterType": "number", "type": "inRange", "filter": -1.5, "filterTo": 0}),
    ("blank", {"filterType": "number", "type": "blank"}),
    ("not empty", {"filterType": "number", "type": "notBlank"}),
    ("> lots", None), ("2 >", None),
]
DATES = [
    ("< 2021-01-01", {"filterType": "date", "type": "lessThan", "dateFrom": "2021-01-01 00:00:00", "dateTo": None}),
    ("2021", {"filterType": "date", "type": "inRange", "dateFrom": "2021-01-01 00:00:00",
              "dateTo": "2021-12-31 00:00:00"}),
    ("2024-02", {"filterType": "date", "type": "inRange", "dateFrom": "2024-02-01 00:00:00",  # a leap year
                 "dateTo": "2024-02-29 00:00:00"}),
    ("> 2020", {"filterType": "date", "type": "greaterThan", "dateFrom": "2020-12-31 00:00:00", "dateTo": None}),
    (">= 2020", {"filterType": "date", "type": "greaterThanOrEqual", "dateFrom": "2020-01-01 00:00:00",
                 "dateTo": None}),
    ("2019 - 2021", {"filterType": "date", "type": "inRange", "dateFrom": "2019-01-01 00:00:00",
                     "dateTo": "2021-12-31 00:00:00"}),
    ("2021-13-01", None), ("soon", None),
]


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    from dashboard.app import create_app

    app = create_app(inputs=scenario_inputs(), upload_dir=tmp_path_factory.mktemp("uploads"))
    with serve(app) as url, chromium() as b, new_page(b) as pg:
        pg.goto(url + "/upload")
        pg.wait_for_function("() => window.tracescreenGrid !== undefined", timeout=30_000)
        yield pg
        assert pg.js_errors == []


@pytest.mark.parametrize("text, model", NUMBERS)
def test_number_comparisons_read_as_ag_grid_models(page, text, model):
    assert page.evaluate("(t) => window.tracescreenGrid.parseNumber(t)", text) == model


@pytest.mark.parametrize("text, model", DATES)
def test_date_comparisons_read_as_calendar_days(page, text, model):
    assert page.evaluate("(t) => window.tracescreenGrid.parseDate(t)", text) == model


@pytest.mark.parametrize("text, model", [t for t in NUMBERS + DATES if t[1] and t[0] not in ("1,000", "not empty")])
def test_a_model_is_shown_back_as_text_that_reads_the_same(page, text, model):
    """The box shows a model set elsewhere (the address, the filter menu) as text that reads back to it."""
    shown = page.evaluate("(m) => window.tracescreenGrid.modelText(m)", model)
    parse = "parseDate" if model["filterType"] == "date" else "parseNumber"
    assert page.evaluate(f"(t) => window.tracescreenGrid.{parse}(t)", shown) == model
