"""Shared fixtures: paths to the demo scenario and small helpers to build lab files."""

from __future__ import annotations

from pathlib import Path

import pytest

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
