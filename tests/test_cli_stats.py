"""summary.csv, exceedances.csv and trends.csv from `tracescreen screen`, and `tracescreen trends`, end to end."""

import numpy as np
import pandas as pd
from lab_files import write_csv

from tracescreen.caution import CAUTION
from tracescreen.cli import main
from tracescreen.statistics.summary import EXCEEDANCE_COLUMNS, SUMMARY_COLUMNS
from tracescreen.statistics.trends import TABLE_COLUMNS


def _lab_file(tmp_path):
    """Invented lab file: arsenic at W1 rising about 1 µg/L a year, quarterly 2017-2021, with <1 results."""
    dates = pd.date_range("2017-02-10", periods=20, freq="3MS") + pd.Timedelta(days=9)
    rng = np.random.default_rng(1)
    values = 1.0 + (np.arange(20) / 4.0) + rng.normal(0, 0.3, 20)
    lines = ["Site,Sample ID,Sample Date,Parameter,Fraction,Result,Units,LOR,Sample Type,Parent Sample"]
    for k, (d, v) in enumerate(zip(dates, values)):
        result = "<1" if v < 1.2 else f"{v:.2f}"
        lines.append(f"W1,S{k},{d:%Y-%m-%d},Arsenic,Total,{result},ug/L,1,Normal,")
    lines.append(f"W1,D1,{dates[0]:%Y-%m-%d},Arsenic,Total,50,ug/L,1,Field duplicate,S0")
    for k in range(5):
        lines.append(f"W2,T{k},2020-0{k + 1}-15,Lead,Total,{2 + k},ug/L,1,Normal,")
    return write_csv(tmp_path, "\n".join(lines) + "\n")


def test_screen_writes_statistics_tables(tmp_path, capsys):
    """`screen` writes summary, exceedance and trend tables with the documented columns (README.md#statistics-summarycsv-exceedancescsv-trendscsv)."""
    lab = _lab_file(tmp_path)
    assert main(["screen", str(lab), "--limits", "limits", "--out", str(tmp_path / "o")]) == 0
    assert CAUTION in capsys.readouterr().out
    summary = pd.read_csv(tmp_path / "o" / "summary.csv")
    exceed = pd.read_csv(tmp_path / "o" / "exceedances.csv")
    trends = pd.read_csv(tmp_path / "o" / "trends.csv")
    assert list(summary.columns) == SUMMARY_COLUMNS
    assert list(exceed.columns) == EXCEEDANCE_COLUMNS
    assert list(trends.columns) == TABLE_COLUMNS
    w1 = summary.set_index("site_id").loc["W1"]
    assert w1["n"] == 20 and w1["max_detected"] < 50  # the field duplicate is QC, left out
    t = trends.set_index("site_id")
    assert t.loc["W1", "direction"] == "increasing"
    assert t.loc["W1", "test"] == "seasonal_kendall_4_seasons"
    assert 0.7 < t.loc["W1", "slope_per_year"] < 1.3
    assert t.loc["W2", "direction"] == "too_few"
    # WHO arsenic 10 µg/L (WHO GDWQ 2022) is reached some years after the last sample
    assert pd.Timestamp(t.loc["W1", "crosses_limit_on"]) > pd.Timestamp(t.loc["W1", "last_sampled"])
    assert (exceed["proportion_above"] <= exceed["ci95_high"]).all()


def test_screen_options_choose_method_and_alpha(tmp_path):
    """--stats-method substitution_half_dl is labelled; --seasonal never gives Mann-Kendall."""
    lab = _lab_file(tmp_path)
    out = tmp_path / "o"
    assert main(["screen", str(lab), "--limits", "limits", "--out", str(out),
                 "--stats-method", "substitution_half_dl", "--seasonal", "never", "--alpha", "0.01"]) == 0
    summary = pd.read_csv(out / "summary.csv").set_index("site_id")
    assert summary.loc["W1", "method"] == "substitution_half_dl"
    assert set(pd.read_csv(out / "trends.csv")["test"]) == {"mann_kendall"}


def test_trends_command(tmp_path, capsys):
    """`tracescreen trends` writes trends.csv and rejected.csv and prints directions and the caution."""
    lab = _lab_file(tmp_path)
    assert main(["trends", str(lab), "--limits", "limits", "--out", str(tmp_path / "t")]) == 0
    out = capsys.readouterr().out
    assert "increasing" in out and CAUTION in out
    table = pd.read_csv(tmp_path / "t" / "trends.csv")
    assert len(table) == 2 and (tmp_path / "t" / "rejected.csv").exists()
