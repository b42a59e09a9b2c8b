"""`tracescreen screen` end to end on the demo scenario: the output tables and their columns."""

from __future__ import annotations

import pandas as pd

from tracescreen.cli import main


def test_cli_writes_periods_and_uncertainty_columns(tmp_path, scenario_args, capsys):
    """`tracescreen screen --guard-band 1` on the demo writes periods.csv and states the guard band in the summary."""
    out = tmp_path / "out"
    assert main(["screen", *scenario_args, "--out", str(out), "--guard-band", "1"]) == 0
    text = capsys.readouterr().out
    assert "guard band g = 1 x expanded uncertainty U" in text and "CAUTION" in text
    per = pd.read_csv(out / "periods.csv")
    scr = pd.read_csv(out / "screening.csv", low_memory=False)
    assert {"running_annual_mean", "percentile"} <= set(per["basis"])
    assert set(scr.loc[scr["basis"] == "percentile", "period_id"]) <= set(per["period_id"])
    assert "uncertainty_decision" in scr.columns and scr["uncertainty_decision"].notna().any()
    assert main(["screen", *scenario_args, "--out", str(out), "--guard-band", "-1"]) == 2
