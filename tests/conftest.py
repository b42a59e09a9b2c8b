"""Shared fixtures: paths to the demo scenario and small helpers to build lab files."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = ROOT / "scenario_data"


@pytest.fixture
def scenario_args() -> list[str]:
    """Command-line data options for the whole demo scenario."""
    files = sorted(SCENARIO.glob("lab_results_*.csv")) + sorted(SCENARIO.glob("lab_results_*.xlsx"))
    limits = sorted((ROOT / "limits").glob("*.yaml")) + [SCENARIO / "limits"]
    args = [str(f) for f in files]
    for lim in limits:
        args += ["--limits", str(lim)]
    return args + ["--sites", str(SCENARIO / "sites.csv"), "--columns", str(SCENARIO / "columns_eastbank.yaml")]
