"""Qualifiers, remarks and detection conditions are read code by code from the vocabulary.

Check values and their sources:
* validation qualifiers U, J, J+, J-, UJ, R: US EPA CLP National Functional Guidelines for
  Inorganic Superfund Methods Data Review (2020), as summarised in data/qualifiers.yaml;
* WQX ResultDetectionCondition phrases ("Not Detected", "Between Inst Detect and Quant Limit",
  "Value affected by contamination"): WQX domain values (data/qualifiers.yaml, source wqx_rdc);
* WQX MeasureQualifierCode FUB "Field Tubing Blank, failed" and the other codes with a U in them:
  WQX domain ResultMeasureQualifier (source wqx_rmq);
* USGS NWIS remark code ``<`` "less than" and ``E`` "estimated": NWIS remark codes (source
  usgs_remark_table);
* the real WQP file: tests/data/wqp_narrowresult_orsanco_nps_2024_metals.csv (tests/data/README.md).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import yaml
from lab_files import write_csv

from tracescreen.io import qualifiers
from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen

DATA = Path(__file__).parent / "data"
LIMITS = Path(__file__).resolve().parents[1] / "limits"
WQP = DATA / "wqp_narrowresult_orsanco_nps_2024_metals.csv"


def _meaning(cell: str, column: str = "qualifier") -> str:
    return qualifiers.read_column(pd.Series([cell]), column)["meanings"].iloc[0]


@pytest.mark.parametrize("code,meaning", [  # NFG inorganic 2020, Table of qualifiers
    ("U", "nondetect"), ("J", "detected_estimated"), ("J+", "estimated_high"), ("J-", "estimated_low"),
    ("UJ", "nondetect_estimated"), ("R", "rejected"),
])
def test_validation_qualifiers(code, meaning):
    assert _meaning(code) == meaning


@pytest.mark.parametrize("cell", [
    "Duplicate", "Estimated value", "FUB", "SUB", "UNC",  # letters U inside words and WQX codes
])
def test_a_letter_inside_a_code_is_never_a_nondetect(cell):
    """Before: any qualifier containing "u" became a non-detect. Now whole codes only."""
    assert "nondetect" not in _meaning(cell).split(";")


@pytest.mark.parametrize("phrase,meaning", [  # WQX ResultDetectionCondition
    ("Not Detected", "nondetect"), ("not detected", "nondetect"),
    ("Below Reporting Limit", "nondetect"),
    ("Between Inst Detect and Quant Limit", "detected_estimated"),
    ("Present Below Quantification Limit", "detected_estimated"),
    ("Value affected by contamination", "blank_contamination"),
    ("Above Operating Range", "above_range"),
])
def test_detection_condition_phrases(phrase, meaning):
    assert _meaning(phrase, "detection_condition") == meaning
    assert _meaning(phrase) == meaning  # a phrase in a qualifier column reads the same


def test_several_codes_in_one_cell_and_unknown_codes_kept():
    r = qualifiers.read_column(pd.Series(["H;U", "J, B", "ZZ9"]), "qualifier")
    assert "nondetect" in r["meanings"].iloc[0].split(";")
    assert r["meanings"].iloc[1].split(";")[0] == "detected_estimated"
    assert r["meanings"].iloc[2] == "" and r["unknown"].iloc[2] == "ZZ9"  # reported, not guessed


def test_same_letter_means_what_its_column_says():
    """R: rejected as a validation qualifier, a radiochemical non-detect as an NWIS remark (usgs_remark_table)."""
    assert _meaning("R", "qualifier") == "rejected"
    assert _meaning("R", "remark_code") == "nondetect"
    assert _meaning("E", "remark_code") == "detected_estimated"


def test_vocabulary_file_is_complete_and_sourced():
    data = yaml.safe_load((Path(qualifiers.VOCABULARY_FILE)).read_text(encoding="utf-8"))
    sources, meanings = set(data["sources"]), set(data["meanings"])
    for ns, codes in data["namespaces"].items():
        seen = set()
        for c in codes:
            assert c["meaning"] in meanings, (ns, c)
            assert c["source"] in sources, (ns, c)
            assert c["checked"] in ("seen", "memory"), (ns, c)
            assert c["code"] not in seen, f"{ns}: {c['code']} twice"
            seen.add(c["code"])
    for ns in qualifiers.COLUMN_NAMESPACES.values():
        qualifiers._lookups(ns)  # every namespace a column uses exists


LIMIT_LEAD = """id: t
name: test table
source: test
use: drinking
unit: ug/L
entries:
  - {analyte: lead, fraction: total, value: 10}
"""


def _screen(tmp_path, body, head="site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,qualifier"):
    f = write_csv(tmp_path, head + "\n" + body)
    (tmp_path / "t.yaml").write_text(LIMIT_LEAD, encoding="utf-8")
    loaded = load_results([f], LoadOptions())
    return loaded, screen(loaded.accepted, load_limits(tmp_path / "t.yaml"))


def test_nwis_remark_less_than_is_a_nondetect_at_the_result(tmp_path):
    """Before: a '<' in a separate remark column was ignored and the row screened as detected at 12."""
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,12,ug/L,<,\n",
                          head="site_no,sample_id,sample_dt,analyte,fraction,result_va,unit,remark_cd,qualifier")
    r = out.iloc[0]
    assert not r.detected and r.detection_limit_ug_L == 12.0
    assert r.status == "nondetect_inconclusive"  # DL 12 above the limit 10: undecided, not an exceedance


def test_detection_condition_not_detected_is_a_nondetect(tmp_path):
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,0.5,ug/L,Not Detected\n",
                          head="site_id,sample_id,sampled_at,analyte,fraction,result,unit,ResultDetectionConditionText")
    assert not out.iloc[0].detected and out.iloc[0].status == "nondetect_meets"


def test_rejected_result_is_never_a_finding(tmp_path):
    """A lead result of 12 µg/L qualified R (unusable, NFG) must not appear as an exceedance."""
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,12,ug/L,,R\nS1,B,2021-03-05,Lead,total,12,ug/L,,J+\n")
    assert len(loaded.rejected) == 0  # not an error in the file: set aside, with its reason, and counted
    assert len(loaded.set_aside) == 1 and "unusable" in loaded.set_aside["reason"].iloc[0]
    assert list(out["sample_id"]) == ["B"] and out.iloc[0].status == "exceeds"
    assert out.iloc[0].qualifier_meaning == "estimated_high"  # bias kept for the report and retest flags


def test_lab_qc_rows_are_set_aside_not_rejected(tmp_path):
    """LCS and matrix-spike rows of a lab deliverable are not results for screening (sample_types.yaml, common practice)."""
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,9.8,ug/L,LCS\nS1,B,2021-03-04,Lead,total,3,ug/L,N\n"
                                    "S1,C,2021-03-04,Lead,total,25,ug/L,MS\n",
                          head="site_id,sample_id,sampled_at,analyte,fraction,result,unit,sample_type")
    assert list(out["sample_id"]) == ["B"] and len(loaded.rejected) == 0
    assert len(loaded.set_aside) == 2 and loaded.set_aside["reason"].str.contains("laboratory QC sample").all()
    assert int(loaded.files["set_aside"].sum()) == 2


def test_analyte_outside_the_registry_is_set_aside(tmp_path):
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Nitrate,total,3,mg/L,,\n")
    assert len(loaded.accepted) == 0 and len(loaded.rejected) == 0 and len(loaded.set_aside) == 1


def test_duplicate_qualifier_stays_detected(tmp_path):
    """Before: 'Duplicate' contains a u and turned an exceedance into nondetect_meets."""
    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,12,ug/L,,Duplicate\n")
    assert out.iloc[0].detected and out.iloc[0].status == "exceeds"
    assert out.iloc[0].qualifier_meaning == "unknown:Duplicate"


def test_real_wqp_narrowresult_file_reads_without_a_mapping():
    """The WQP narrowResult extract reads with no --columns; every Not Detected row is a non-detect.

    Counts from tests/data/README.md: 15 rows 'Not Detected'; the narrowResult profile carries no
    detection limits, so those rows cannot be screened and are listed with that reason.
    """
    raw = pd.read_csv(WQP, dtype=str, keep_default_na=False)
    loaded = load_results([WQP], LoadOptions(date_order="mdy"))
    assert len(loaded.accepted) + len(loaded.set_aside) + len(loaded.rejected) == len(raw) == 50
    nd_rows = set((np.flatnonzero(raw["ResultDetectionConditionText"] == "Not Detected") + 2).tolist())
    assert len(nd_rows) == 15
    acc = loaded.accepted
    assert not set(acc["row"]) & nd_rows  # no non-detect is screened as detected
    rej = loaded.rejected.set_index("row")
    nd_metal = [r for r in nd_rows if r in rej.index]
    assert all("non-detect without a detection limit" in rej.loc[r, "reason"] for r in nd_metal)
    assert len(nd_metal) >= 12
    # the R / Rejected row and the analytes outside the registry (nutrients, bacteria, hardness
    # for now) are set aside, not rejected: rejected.csv shows only what needs attention
    aside = loaded.set_aside.set_index("row")
    r_row = int(np.flatnonzero(raw["MeasureQualifierCode"] == "R")[0]) + 2
    assert "unusable" in aside.loc[r_row, "reason"]
    assert {"Organic carbon", "Orthophosphate", "Escherichia coli"} <= set(aside["CharacteristicName"])
    assert not set(aside.index) & set(rej.index) and not set(aside.index) & set(acc["row"])
    # fractions read from the WQX vocabulary: 'Filtered, field' is dissolved, 'Unfiltered, field' total
    frac = dict(zip(raw.index + 2, raw["ResultSampleFractionText"]))
    for row, f in zip(acc["row"], acc["fraction"].astype(str)):
        assert f == {"Filtered, field": "dissolved", "Unfiltered, field": "total",
                     "Dissolved": "dissolved", "Total": "total"}[frac[row]]
    out = screen(acc, load_limits(LIMITS / "us_epa_npdwr_inorganics.yaml"))
    assert not (out["status"] == "exceeds").any()


@pytest.mark.parametrize("cell,remark,status", [
    (">50", "", "exceeds"),               # at least 50 µg/L against 10: a certain exceedance
    (">5", "", "above_range_inconclusive"),  # at least 5 against 10: cannot decide
    ("50", ">", "exceeds"),               # NWIS remark '>' "greater than" (usgs_remark_table)
])
def test_above_range_is_at_least_the_value(tmp_path, cell, remark, status):
    """README.md#input-lab-results: '>x' is kept as "at least x" (before: thrown away), exceeds when x > limit (logic of
    the bound; common practice), undecided otherwise, and listed for dilution and reanalysis."""
    from tracescreen.retest.listing import retest_list

    loaded, out = _screen(tmp_path, f"S1,A,2021-03-04,Lead,total,{cell},ug/L,{remark},\n",
                          head="site_id,sample_id,sampled_at,analyte,fraction,result,unit,remark_cd,qualifier")
    assert len(loaded.rejected) == 0 and out.iloc[0].status == status
    assert out.iloc[0].value_ug_L == float(cell.lstrip(">")) and "above_range" in out.iloc[0].qualifier_meaning
    flags = retest_list(out)
    assert "above_range" in set(flags["reason"])
    assert "dilute and reanalyse" in flags.loc[flags["reason"] == "above_range", "suggested_action"].iloc[0]


def test_exceedance_detail_states_the_qualifier_bias(tmp_path):
    """NFG 2020: J+ estimated, biased high (an exceedance is weak); J- biased low (firm)."""
    from tracescreen.retest.listing import retest_list

    loaded, out = _screen(tmp_path, "S1,A,2021-03-04,Lead,total,12,ug/L,,J+\nS2,B,2021-03-04,Lead,total,12,ug/L,,J-\n")
    flags = retest_list(out).set_index("site_id")
    first = flags[flags["reason"] == "first_exceedance"]["detail"]
    assert "biased high" in first["S1"] and "weak" in first["S1"]
    assert "biased low" in first["S2"] and "firm" in first["S2"]
