"""Detection and quantitation limits: typed, each with its unit, and what they do to a result.

Sources of the rules checked:
* a value between the detection and the quantitation limit is detected but estimated: US EPA NFG
  2020 qualifier J ("the result is an estimated quantity"), and the WQX detection condition
  "Between Inst Detect and Quant Limit" (data/qualifiers.yaml);
* the limit types and their classes: data/limit_types.yaml (WQX DetectionQuantitationLimitType
  domain; NWIS rpt_lev_cd codes, inldata documentation: LRL "laboratory reporting level", DLDQC
  "detection limit by DQCALC"; USGS Samples "Censoring Level");
* a non-detect is censored at the limit reported with it, never at zero (common practice; Helsel,
  Statistics for Censored Environmental Data, 2012, from memory).
The file contents are inputs; the numbers checked follow from those rules.
"""

from __future__ import annotations

import pytest
from lab_files import write_csv

from tracescreen.io.loading import LoadOptions, load_results

HEAD = "site_id,sample_id,sampled_at,analyte,fraction,result,unit"


def _acc(tmp_path, extra_head: str, rows: list[str], **opts):
    text = HEAD + "," + extra_head + "\n" + "".join(f"S1,{i},2021-03-04,Lead,total,{r}\n" for i, r in enumerate(rows))
    loaded = load_results([write_csv(tmp_path, text)], LoadOptions(**opts))
    return loaded.accepted.set_index("sample_id"), loaded


def test_detection_and_quantitation_limits_with_their_own_units(tmp_path):
    """Result in µg/L, MDL in mg/L, RL in µg/L: each limit converted with its own unit."""
    acc, _ = _acc(tmp_path, "MDL,MDL Units,RL,RL Units",
                  ["0.3,ug/L,0.0001,mg/L,0.5,ug/L", "2,ug/L,0.0001,mg/L,0.5,ug/L", "ND,ug/L,0.0001,mg/L,0.5,ug/L"])
    assert acc.loc["0", "quantitation_limit_ug_L"] == 0.5 and acc.loc["0", "detection_limit_ug_L"] == 0.1
    assert acc.loc["0", "qualifier_meaning"] == "detected_estimated"  # 0.1 <= 0.3 < 0.5: estimated
    assert acc.loc["1", "qualifier_meaning"] == ""  # 2 >= RL: a quantified result
    assert not acc.loc["2", "detected"] and acc.loc["2", "detection_limit_ug_L"] == 0.1  # ND at the MDL


def test_a_nondetect_with_only_a_reporting_limit_is_censored_at_it(tmp_path):
    acc, _ = _acc(tmp_path, "LOR", ["<LOR,ug/L,0.5", "ND,ug/L,0.5"])
    assert (~acc["detected"]).all() and (acc["detection_limit_ug_L"] == 0.5).all()


def test_a_number_qualified_u_is_censored_at_the_number_not_the_reporting_limit(tmp_path):
    """NFG 2020: for U "the value shown is that limit"; a reporting-limit column does not replace it."""
    acc, _ = _acc(tmp_path, "qualifier,RL", ["0.5,ug/L,U,1.0"])
    assert not acc.loc["0", "detected"] and acc.loc["0", "detection_limit_ug_L"] == 0.5


@pytest.mark.parametrize("kind,value,expect", [
    ("Method Detection Level", "0.1", "detection"),
    ("Laboratory Reporting Level", "0.2", "quantitation"),
    ("Lower Reporting Limit", "0.2", "quantitation"),
    ("Censoring Level", "0.3", "censoring"),
])
def test_wqx_limit_types(tmp_path, kind, value, expect):
    """WQX DetectionQuantitationLimitTypeName with its value and unit: a 'Not Detected' row is
    censored at the reported limit; the unit comes from the limit when the result has none (a WQP
    file leaves ResultMeasure/MeasureUnitCode empty on non-detects)."""
    head = ("MonitoringLocationIdentifier,ActivityIdentifier,ActivityStartDate,CharacteristicName,"
            "ResultSampleFractionText,ResultMeasureValue,ResultMeasure/MeasureUnitCode,ResultDetectionConditionText,"
            "DetectionQuantitationLimitTypeName,DetectionQuantitationLimitMeasure/MeasureValue,"
            "DetectionQuantitationLimitMeasure/MeasureUnitCode\n")
    body = (f"S1,A,2021-03-04,Lead,Total,,,Not Detected,{kind},{value},mg/L\n"
            f"S1,B,2021-03-04,Lead,Total,0.15,mg/L,,{kind},{value},mg/L\n")
    loaded = load_results([write_csv(tmp_path, head + body)])
    acc = loaded.accepted.set_index("sample_id")
    assert len(loaded.rejected) == 0
    assert not acc.loc["A", "detected"] and acc.loc["A", "detection_limit_ug_L"] == float(value) * 1000
    assert acc.loc["A", "unit"] == "mg/L"
    below_q = expect == "quantitation" and 0.15 < float(value)
    assert ("detected_estimated" in acc.loc["B", "qualifier_meaning"]) == below_q


def test_an_upper_limit_bounds_a_result_above_the_range(tmp_path):
    """'Present Above Quantification Limit' with no number and an 'Upper Quantitation Limit' of
    200 µg/L is at least 200 µg/L (above_range), which exceeds a 10 µg/L limit whatever the value."""
    head = ("MonitoringLocationIdentifier,ActivityIdentifier,ActivityStartDate,CharacteristicName,"
            "ResultSampleFractionText,ResultMeasureValue,ResultMeasure/MeasureUnitCode,ResultDetectionConditionText,"
            "DetectionQuantitationLimitTypeName,DetectionQuantitationLimitMeasure/MeasureValue,"
            "DetectionQuantitationLimitMeasure/MeasureUnitCode\n")
    body = "S1,A,2021-03-04,Lead,Total,,,Present Above Quantification Limit,Upper Quantitation Limit,200,ug/L\n"
    acc = load_results([write_csv(tmp_path, head + body)]).accepted
    assert acc["detected"].iloc[0] and acc["value_ug_L"].iloc[0] == 200.0
    assert "above_range" in acc["qualifier_meaning"].iloc[0]


def test_detected_not_quantified_is_below_its_quantitation_limit(tmp_path):
    """'Detected Not Quantified' with a reporting limit of 2 µg/L: below 2 (censored at it), and
    still marked detected-estimated; without a limit it is rejected with that reason."""
    head = HEAD + ",ResultDetectionConditionText,RL\n"
    body = "S1,A,2021-03-04,Lead,total,,ug/L,Detected Not Quantified,2\nS1,B,2021-03-04,Lead,total,,ug/L,Detected Not Quantified,\n"
    loaded = load_results([write_csv(tmp_path, head + body)])
    acc = loaded.accepted
    assert list(acc["sample_id"].astype(str)) == ["A"] and not acc["detected"].iloc[0]
    assert acc["detection_limit_ug_L"].iloc[0] == 2.0 and "detected_estimated" in acc["qualifier_meaning"].iloc[0]
    assert "detected but not quantified" in loaded.rejected["reason"].iloc[0]


def test_a_limit_that_is_not_a_limit_of_the_measurement_is_ignored(tmp_path):
    """WQX 'Drinking Water Maximum' is a standard (class other): a 'Not Detected' row with only that
    is a non-detect without a limit, never censored at the standard."""
    head = HEAD + ",ResultDetectionConditionText,DetectionQuantitationLimitTypeName,DetectionQuantitationLimitMeasure/MeasureValue\n"
    loaded = load_results([write_csv(tmp_path, head + "S1,A,2021-03-04,Lead,total,,ug/L,Not Detected,Drinking Water Maximum,15\n")])
    assert len(loaded.accepted) == 0 and "non-detect without a detection limit" in loaded.rejected["reason"].iloc[0]


def test_usgs_samples_two_typed_limits(tmp_path):
    """USGS Samples: DetectionLimit_TypeA / TypeB. A non-detect takes the censoring level (A) before
    the detection limit (B); a detected value below the reporting level (B) is estimated."""
    head = ("Location_Identifier,Activity_ActivityIdentifier,Activity_StartDate,Result_Characteristic,"
            "Result_SampleFraction,Result_Measure,Result_MeasureUnit,Result_ResultDetectionCondition,"
            "DetectionLimit_TypeA,DetectionLimit_MeasureA,DetectionLimit_MeasureUnitA,"
            "DetectionLimit_TypeB,DetectionLimit_MeasureB,DetectionLimit_MeasureUnitB\n")
    body = ("USGS-1,A,2023-07-25,Lead,Filtered field and/or lab,,,Not Detected,Censoring Level,0.05,ug/L,"
            "Detection limit by DQCALC,0.02,ug/L\n"
            "USGS-1,B,2023-07-25,Lead,Unfiltered,0.08,ug/L,,Detection limit by DQCALC,0.02,ug/L,"
            "Reporting limit by DQCALC,0.1,ug/L\n")
    acc = load_results([write_csv(tmp_path, head + body)]).accepted.set_index("sample_id")
    assert acc.loc["A", "detection_limit_ug_L"] == 0.05 and acc.loc["A", "fraction"] == "dissolved"
    assert acc.loc["B", "detection_limit_ug_L"] == 0.02 and acc.loc["B", "quantitation_limit_ug_L"] == 0.1
    assert acc.loc["B", "qualifier_meaning"] == "detected_estimated" and acc.loc["B", "fraction"] == "total"
