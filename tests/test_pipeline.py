"""One pipeline (tracescreen.pipeline): each stage runs once per run and gives what the stages give alone.

References: the stages' own functions called one by one on the same inputs (screen, period_table,
retest_list, summarise, trend_table); the property under test is the wiring, not the methods.
"""

from __future__ import annotations

from unittest import mock

import pandas as pd
from conftest import demo_inputs

from tracescreen import pipeline
from tracescreen.report.writers import write_csv
from tracescreen.retest.listing import retest_list
from tracescreen.screening import periods
from tracescreen.screening.screen import screen
from tracescreen.statistics.summary import exceedance_rates, summarise


def _same(a: pd.DataFrame, b: pd.DataFrame, tmp_path, name: str) -> bool:
    """Same table as written to CSV (the output users get; categoricals and text compare alike)."""
    return write_csv(a, tmp_path / f"{name}_a.csv").read_bytes() == write_csv(b, tmp_path / f"{name}_b.csv").read_bytes()


def test_run_gives_what_the_stages_give_one_by_one(demo_results, tmp_path):
    res = demo_results
    acc, limits, sites = res.loaded.accepted, res.limits, res.sites
    screened = screen(acc, limits, sites)
    assert _same(res.screened, screened, tmp_path, "screening")
    assert _same(res.periods, periods.period_table(screened, limits), tmp_path, "periods")
    assert _same(res.retest, retest_list(screened), tmp_path, "retest")
    assert _same(res.summary, summarise(acc), tmp_path, "summary")
    assert _same(res.exceedances, exceedance_rates(screened), tmp_path, "exceedances")
    assert len(res.trends) and set(res.trends["site_id"]) <= set(acc["site_id"])
    assert len(res.input_files) == len(res.loaded.files) + len(limits.tables) + 1  # results, tables, sites


def test_period_rules_are_evaluated_once_per_run():
    """The period statuses and the periods table come from one evaluation (they were two before)."""
    with mock.patch.object(periods, "evaluate", wraps=periods.evaluate) as spy:
        res = pipeline.run(demo_inputs(), pipeline.Options(statistics=None, retest=None))
    assert spy.call_count == 1 and len(res.periods)
    assert res.summary is None and res.retest is None  # only what the options ask for


def test_each_step_runs_once(monkeypatch):
    """load, screen, statistics and retest are each called once by run()."""
    calls = {}
    for name in ("load", "screen", "statistics", "retest"):
        original = getattr(pipeline, name)

        def counted(*args, _name=name, _original=original, **kwargs):
            calls[_name] = calls.get(_name, 0) + 1
            return _original(*args, **kwargs)

        monkeypatch.setattr(pipeline, name, counted)
    seen = []
    pipeline.run(demo_inputs(), on_loaded=seen.append)
    assert calls == {"load": 1, "screen": 1, "statistics": 1, "retest": 1}
    assert len(seen) == 1 and len(seen[0].loaded.accepted)


def test_guard_band_and_same_fraction_only_reach_the_screening(demo_loaded):
    data = demo_loaded
    plain, _ = pipeline.screen(data.loaded.accepted, data.limits, data.sites,
                               pipeline.Options(periods=False, cross_fraction=False))
    banded, _ = pipeline.screen(data.loaded.accepted, data.limits, data.sites,
                                pipeline.Options(periods=False, guard_band=1.0))
    assert "uncertainty_decision" in banded and "uncertainty_decision" not in plain
    crossed = banded["limit_fraction"].astype(str) != banded["fraction"].astype(str)
    assert crossed[banded["limit_fraction"].astype(str) != ""].any()
    assert not (plain["limit_fraction"].astype(str) != plain["fraction"].astype(str))[
        plain["limit_fraction"].astype(str) != ""].any()
