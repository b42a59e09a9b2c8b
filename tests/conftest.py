"""Shared fixtures: paths to the demo scenario and small helpers to build lab files."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hypothesis import settings

# property and fuzz tests draw the same cases on every run (no example database): a red CI is a
# reproducible failure, never a chance one; a test may still ask for more examples in its own @settings
settings.register_profile("tracescreen", derandomize=True, database=None)
settings.load_profile("tracescreen")

# a tracescreen.yaml in the working folder (README "Configuration file") must not change what the tests run
os.environ["TRACESCREEN_NO_CONFIG"] = "1"

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = ROOT / "scenario_data"


def demo_args() -> list[str]:
    """Command-line data options for the whole demo scenario."""
    files = sorted(SCENARIO.glob("lab_results_*.csv")) + sorted(SCENARIO.glob("lab_results_*.xlsx"))
    limits = sorted((ROOT / "limits").glob("*.yaml")) + [SCENARIO / "limits"]
    args = [str(f) for f in files]
    for lim in limits:
        args += ["--limits", str(lim)]
    return args + ["--sites", str(SCENARIO / "sites.csv"), "--columns", str(SCENARIO / "columns_eastbank.yaml")]


@pytest.fixture(scope="session", autouse=True)
def _crash_logs_in_a_temporary_folder(tmp_path_factory):
    """A command that fails with a bug writes its log under the test session's folder, not the user's."""
    os.environ["XDG_STATE_HOME"] = str(tmp_path_factory.mktemp("state"))


@pytest.fixture
def sites():
    """Two sites: a well whose water is drunk (W) and a river with aquatic life (R), no default hardness."""
    import numpy as np
    import pandas as pd

    return pd.DataFrame({"site_id": ["W", "R"], "name": ["well", "river"], "latitude": [0.0, 0.0],
                         "longitude": [0.0, 0.0], "uses": [("drinking_water",), ("freshwater_aquatic",)],
                         "hardness_mg_L": [np.nan, np.nan]})


@pytest.fixture
def scenario_args() -> list[str]:
    """Command-line data options for the whole demo scenario."""
    return demo_args()


@pytest.fixture(scope="session")
def demo_screen_dir(tmp_path_factory) -> Path:
    """Output folder of ``tracescreen screen`` on the demo scenario (run once per test session)."""
    from tracescreen.cli import main

    out = tmp_path_factory.mktemp("demo_screen")
    assert main(["screen", *demo_args(), "--out", str(out)]) == 0
    return out


@pytest.fixture(scope="session")
def demo_report(tmp_path_factory) -> dict[str, Path]:
    """``tracescreen report`` on the demo scenario: paths of the HTML report, its PDF, Word document
    and workbook (the cover from scenario_data/report_cover.yaml)."""
    from tracescreen.cli import main

    out = tmp_path_factory.mktemp("demo_report")
    paths = {k: out / f"report.{k}" for k in ("html", "pdf", "docx", "xlsx")}
    assert main(["report", *demo_args(), "--cover", str(SCENARIO / "report_cover.yaml"), "--out", str(paths["html"]),
                 "--pdf", str(paths["pdf"]), "--docx", str(paths["docx"]), "--xlsx", str(paths["xlsx"])]) == 0
    return paths


def demo_inputs():
    """The whole demo scenario as :class:`tracescreen.pipeline.Inputs`."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions
    from tracescreen.pipeline import Inputs

    files = sorted(SCENARIO.glob("lab_results_*.csv")) + sorted(SCENARIO.glob("lab_results_*.xlsx"))
    limits = sorted((ROOT / "limits").glob("*.yaml")) + [SCENARIO / "limits"]
    return Inputs(results=tuple(files), limits=tuple(limits), sites=SCENARIO / "sites.csv",
                  reading=LoadOptions(column_map=load_column_map(SCENARIO / "columns_eastbank.yaml")))


@pytest.fixture(scope="session")
def demo_loaded():
    """The demo scenario as read by the pipeline's first step (:func:`tracescreen.pipeline.load`)."""
    from tracescreen.pipeline import load

    return load(demo_inputs())


@pytest.fixture(scope="session")
def demo_results():
    """Every output table of one pipeline run on the demo scenario (:func:`tracescreen.pipeline.run`)."""
    from tracescreen.pipeline import run

    return run(demo_inputs())


@pytest.fixture(scope="module")
def browser():
    """Debian's headless Chromium for the browser tests of a module (skipped where it is not installed)."""
    from browser_support import CHROMIUM, chromium

    if not CHROMIUM.exists():  # pragma: no cover - .ci/run installs it
        pytest.skip("Debian chromium is not installed (apt-get install chromium)")
    with chromium() as b:
        yield b


@pytest.fixture
def page(browser):
    """A fresh page of ``browser`` (its JavaScript errors in ``page.js_errors``)."""
    from browser_support import new_page

    with new_page(browser) as pg:
        yield pg
