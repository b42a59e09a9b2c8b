"""Screening statuses, applicability, effective dates and floating-point equality."""


import numpy as np
import pandas as pd
import pytest
from lab_files import write_csv

from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen
from tracescreen.screening.status import classify, worst_status

TABLE = """\
id: dw
name: Drinking test table
source: "Test body (2020). Test document, table 1."
use: drinking_water
unit: ug/L
entries:
  - {analyte: arsenic, fraction: total, value: 10}
  - {analyte: lead, fraction: total, value: 10, effective_to: 2019-12-31}
  - {analyte: lead, fraction: total, value: 5, effective_from: 2020-01-01}
"""
AQ = """\
id: aq
name: Aquatic test table
source: "Test body (2020). Test document, table 2."
use: freshwater_aquatic
unit: ug/L
entries:
  - analyte: zinc
    fraction: dissolved
    duration: chronic
    hardness_formula: {m: 0.8473, b: 0.884, cf: 0.986}
    hardness_range: [25, 400]
"""
HEAD = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,hardness_mg_L\n"


@pytest.fixture
def limits(tmp_path):
    (tmp_path / "lim").mkdir()
    (tmp_path / "lim" / "dw.yaml").write_text(TABLE)
    (tmp_path / "lim" / "aq.yaml").write_text(AQ)
    return load_limits(tmp_path / "lim")


def _screen(tmp_path, body, limits, sites):
    res = load_results([write_csv(tmp_path, HEAD + body)], LoadOptions())
    assert res.rejected.empty, res.rejected
    return screen(res.accepted, limits, sites)


def test_classify_every_status():
    """exceeds / meets / nondetect_meets / nondetect_inconclusive / no_limit per the issue's definitions."""
    st = classify([True, True, True, False, False, False, True],
                  [11, 10, 9, np.nan, np.nan, np.nan, 5], [np.nan, 1, 1, 10, 5, 20, 1],
                  [10, 10, 10, 10, 10, 10, np.nan])
    assert st.tolist() == ["exceeds", "meets", "meets", "nondetect_meets", "nondetect_meets",
                           "nondetect_inconclusive", "no_limit"]


def test_mg_per_L_equal_to_ug_per_L_limit_meets(tmp_path, limits, sites):
    """0.01 mg/L arsenic = 10 µg/L limit: equal meets; 0.0100001 mg/L exceeds (README.md#output-screeningcsv, equality rule)."""
    out = _screen(tmp_path, "W,A,2021-01-05,arsenic,total,0.01,mg/L,,\nW,B,2021-01-05,arsenic,total,0.0100001,mg/L,,\n",
                  limits, sites)
    assert out["status"].tolist() == ["meets", "exceeds"]


def test_floating_point_residue_never_creates_an_exceedance():
    """Values whose binary conversion lands a hair above the limit (0.1*3 vs 0.3) still meet it (IEEE 754)."""
    assert 0.1 * 3 > 0.3
    assert classify([True], [0.1 * 3], [np.nan], [0.3]).tolist() == ["meets"]


def test_nondetect_statuses_and_ratio(tmp_path, limits, sites):
    """<5 vs 10 meets as a non-detect; <20 vs 10 is inconclusive; ratio = DL/limit for non-detects."""
    out = _screen(tmp_path, "W,A,2021-01-05,arsenic,total,<5,ug/L,,\nW,B,2021-01-05,arsenic,total,<20,ug/L,,\n",
                  limits, sites)
    assert out["status"].tolist() == ["nondetect_meets", "nondetect_inconclusive"]
    assert out["ratio"].tolist() == [0.5, 2.0]


def test_effective_dates_both_sides(tmp_path, limits, sites):
    """Lead 8 µg/L: meets the 10 µg/L entry on its last day (2019-12-31) and exceeds the 5 µg/L entry on its first (2020-01-01)."""
    out = _screen(tmp_path, "W,A,2019-12-31,lead,total,8,ug/L,,\nW,B,2020-01-01,lead,total,8,ug/L,,\n",
                  limits, sites)
    assert out["limit_ug_L"].tolist() == [10.0, 5.0]
    assert out["status"].tolist() == ["meets", "exceeds"]


def test_use_applicability_and_no_limit(tmp_path, limits, sites):
    """A river site gets only the aquatic table; arsenic there has no entry -> one no_limit row with a note."""
    out = _screen(tmp_path, "R,A,2021-01-05,arsenic,total,50,ug/L,,\n", limits, sites)
    assert len(out) == 1 and out["status"].iloc[0] == "no_limit"
    assert "no limit for this analyte" in out["note"].iloc[0]


def test_hardness_formula_at_100_mg_per_L(tmp_path, limits, sites):
    """Zinc chronic at H=100: exp(0.8473 ln 100 + 0.884) x 0.986 = 118.1 -> 120 µg/L as published
    (US EPA NRWQC, 40 CFR 131.38 table)."""
    out = _screen(tmp_path, "R,A,2021-01-05,zinc,dissolved,100,ug/L,,100\nR,B,2021-01-05,zinc,dissolved,100,ug/L,,\n",
                  limits, sites)
    assert float(f"{out['limit_ug_L'].iloc[0]:.2g}") == 120
    assert out["status"].iloc[0] == "meets"
    assert out["status"].iloc[1] == "no_limit" and "hardness unknown" in out["note"].iloc[1]


def test_without_sites_every_table_applies(tmp_path, limits):
    """No sites file: every table applies to every site (README.md#input-sites)."""
    res = load_results([write_csv(tmp_path, HEAD + "X,A,2021-01-05,arsenic,total,5,ug/L,,\n")])
    out = screen(res.accepted, limits, None)
    assert out["limit_table"].tolist() == ["dw"]


def test_qc_samples_are_not_screened(tmp_path, limits, sites):
    """Field blanks and duplicates get status qc_sample, not a limit comparison."""
    body = ("site_id,sample_id,sampled_at,analyte,fraction,result,unit,sample_type,parent_sample_id\n"
            "W,A,2021-01-05,arsenic,total,50,ug/L,,\nW,B,2021-01-05,arsenic,total,50,ug/L,field duplicate,A\n"
            "W,C,2021-01-05,arsenic,total,50,ug/L,field blank,\n")
    res = load_results([write_csv(tmp_path, body)])
    out = screen(res.accepted, limits, sites)
    assert out["status"].tolist() == ["exceeds", "qc_sample", "qc_sample"]


def test_several_uses_give_several_rows_and_worst_status(tmp_path, limits):
    """A site with two uses is screened against both tables; worst_status picks the most severe."""
    sites = pd.DataFrame({"site_id": ["B"], "name": ["b"], "latitude": [0.0], "longitude": [0.0],
                          "uses": [("drinking_water", "freshwater_aquatic")], "hardness_mg_L": [50.0]})
    res = load_results([write_csv(tmp_path, HEAD + "B,A,2021-01-05,lead,total,7,ug/L,,\n"
                                                  "B,A,2021-01-05,zinc,dissolved,30,ug/L,,\n")])
    out = screen(res.accepted, limits, sites)
    assert out["status"].tolist() == ["exceeds", "meets"]
    w = worst_status(out, ["site_id"])
    assert w["worst_status"].tolist() == ["exceeds"] and w["n_rows"].tolist() == [2]


def test_take_column_keeps_missing_text_as_empty():
    """A plain text column with a missing value is taken as "" (not the text 'nan', not an error)."""
    from tracescreen._internal.frames import take_column

    col = pd.Series(["a", np.nan, "b"], dtype=object)
    out = take_column(col, np.array([1, 0, 2, 1]))
    assert list(out) == ["", "a", "b", ""]
