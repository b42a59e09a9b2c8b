"""Deciding across fractions: a dissolved result above a total limit exceeds it; a total result
within a dissolved criterion meets it (total >= dissolved for one sample; common practice, the
definition of the fractions: the dissolved fraction is the part of the total that passes a
0.45 µm filter, US EPA Method 200.8 section 3 / Standard Methods 3030 B)."""

import pytest
from lab_files import write_csv

from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen

# Values: the US MCL for total chromium is 0.1 mg/L (40 CFR 141.62(b)(5)); the EU lead value
# 10 µg/L (Directive (EU) 2020/2184 Annex I Part B, until 2036-01-11). Test tables carry them.
DW = """\
id: dw
name: Drinking test table
source: "Test body (2020). Test document, table 1."
use: drinking_water
unit: ug/L
entries:
  - {analyte: chromium, fraction: total, value: 50}
"""
AQ = """\
id: aq
name: Aquatic test table
source: "Test body (2020). Test document, table 2."
use: freshwater_aquatic
unit: ug/L
entries:
  - {analyte: arsenic, fraction: dissolved, duration: chronic, value: 150}
"""
HEAD = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit\n"


@pytest.fixture
def limits(tmp_path):
    (tmp_path / "lim").mkdir()
    (tmp_path / "lim" / "dw.yaml").write_text(DW)
    (tmp_path / "lim" / "aq.yaml").write_text(AQ)
    return load_limits(tmp_path / "lim")


def _screen(tmp_path, body, limits, sites, **kw):
    res = load_results([write_csv(tmp_path, HEAD + body)], LoadOptions())
    assert res.rejected.empty, res.rejected
    return screen(res.accepted, limits, sites, **kw)


def test_dissolved_above_total_limit_exceeds(tmp_path, limits, sites):
    """A dissolved chromium result of 60 µg/L at a drinking-water well exceeds a total limit of 50
    (the total is at least 60); the row names the limit's fraction and says how it was decided."""
    out = _screen(tmp_path, "W,S1,2021-01-01,chromium,dissolved,60,ug/L,1\n", limits, sites)
    assert list(out["status"]) == ["exceeds"]
    assert out["limit_fraction"].iloc[0] == "total" and out["fraction"].iloc[0] == "dissolved"
    assert "decided from the dissolved result" in out["note"].iloc[0]
    assert out["limit_ug_L"].iloc[0] == 50


def test_dissolved_below_total_limit_decides_nothing(tmp_path, limits, sites):
    """A dissolved 40 µg/L says nothing about the total: no limit row, status no_limit."""
    out = _screen(tmp_path, "W,S1,2021-01-01,chromium,dissolved,40,ug/L,1\n", limits, sites)
    assert list(out["status"]) == ["no_limit"]


def test_total_within_dissolved_criterion_meets(tmp_path, limits, sites):
    """A total arsenic 100 µg/L meets a dissolved criterion of 150 (dissolved <= total); a total
    non-detect at 1 µg/L meets it as nondetect_meets; a total of 200 decides nothing."""
    out = _screen(tmp_path, "R,S1,2021-01-01,arsenic,total,100,ug/L,1\n"
                            "R,S2,2021-01-01,arsenic,total,<1,ug/L,\n"
                            "R,S3,2021-01-01,arsenic,total,200,ug/L,1\n", limits, sites)
    assert list(out["status"]) == ["meets", "nondetect_meets", "no_limit"]
    assert list(out["limit_fraction"].astype(str)[:2]) == ["dissolved", "dissolved"]
    assert "decided from the total result" in out["note"].iloc[0]


def test_own_fraction_result_wins(tmp_path, limits, sites):
    """When the sample has a total result, the total limit judges the total result only; the
    dissolved result of the same sample is not also compared with it."""
    out = _screen(tmp_path, "W,S1,2021-01-01,chromium,dissolved,60,ug/L,1\n"
                            "W,S1,2021-01-01,chromium,total,70,ug/L,1\n", limits, sites)
    by_frac = out.set_index(out["fraction"].astype(str))["status"].astype(str)
    assert by_frac["total"] == "exceeds" and by_frac["dissolved"] == "no_limit"


def test_option_off(tmp_path, limits, sites):
    """cross_fraction=False keeps the strict same-fraction rule: no_limit."""
    out = _screen(tmp_path, "W,S1,2021-01-01,chromium,dissolved,60,ug/L,1\n", limits, sites,
                  cross_fraction=False)
    assert list(out["status"]) == ["no_limit"]


def test_lacks_other_fraction_same_for_categorical_and_plain_text():
    """The coded comparison answers as comparing the texts row by row (common practice: a sample
    with both fractions of a metal is screened on its own fraction); missing values match each
    other only, not the text "nan"."""
    import pandas as pd

    from tracescreen.screening.fractions import lacks_other_fraction, swapped

    rows = pd.DataFrame({"site_id": ["S1", "S1", "S1", "S2", "S2", "S3", "S3"],
                         "sample_id": ["a", "a", "b", "a", "a", "c", "c"],
                         "analyte": ["zinc", "zinc", "zinc", "lead", None, "nan", None],
                         "fraction": ["total", "dissolved", "total", "dissolved", "total", "total", "dissolved"]})
    want = [False, False, True, True, True, True, True]
    assert lacks_other_fraction(rows).tolist() == want
    coded = rows.astype({c: "category" for c in rows.columns})
    assert lacks_other_fraction(coded).tolist() == want
    assert swapped(coded)["fraction"].astype(str).tolist() == ["dissolved", "total", "dissolved", "total",
                                                               "dissolved", "dissolved", "total"]
