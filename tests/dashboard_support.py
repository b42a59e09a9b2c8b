"""The demo scenario as dashboard inputs, and the engine's own view of it, shared by the dashboard tests."""

from __future__ import annotations

from functools import lru_cache
from pathlib import Path

import pandas as pd

from tracescreen import vocabulary

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = ROOT / "scenario_data"


def scenario_paths() -> dict:
    """Result files, limit tables, sites and column mapping of the demo scenario."""
    return {
        "results": sorted(SCENARIO.glob("lab_results_*.csv")) + sorted(SCENARIO.glob("lab_results_*.xlsx")),
        "limits": sorted((ROOT / "limits").glob("*.yaml")) + [SCENARIO / "limits"],
        "sites": SCENARIO / "sites.csv",
        "columns": SCENARIO / "columns_eastbank.yaml",
    }


@lru_cache(maxsize=1)
def engine_view():
    """The scenario loaded and screened by the engine alone (no dashboard code)."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions, load_results
    from tracescreen.io.sites import load_sites
    from tracescreen.limits.load import load_limits
    from tracescreen.screening.screen import screen

    p = scenario_paths()
    sites = load_sites(p["sites"])
    limits = load_limits(p["limits"])
    loaded = load_results(p["results"], LoadOptions(column_map=load_column_map(p["columns"])), sites,
                          sites_name="sites.csv")
    return loaded, limits, sites, screen(loaded.accepted, limits, sites)


def engine_attention_rows() -> pd.DataFrame:
    """The engine's site-sample rows that exceed or are undecided."""
    screened = engine_view()[3]
    keep = screened["status"].isin(vocabulary.ATTENTION) & (screened["sample_type"] == "sample")
    return screened[keep]


def scenario_inputs():
    """Dashboard inputs for the scenario, loaded the way ``create_app`` loads them."""
    from dashboard.state.store import load_inputs

    p = scenario_paths()
    return load_inputs(p["results"], p["limits"], p["sites"], p["columns"])
