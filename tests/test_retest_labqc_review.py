"""The review of a constructed batch: linking QC rows to results, the blank tiers, the most
protective qualifier, the retest reasons and the per-batch narrative.

Rules checked against US EPA National Functional Guidelines for Inorganic Superfund Methods Data
Review (2020), from memory unless stated: blank tiers (result <= CRQL -> U; CRQL < result <=
blank when blank > CRQL -> U; negative blank: non-detects UJ), combination (R wins; J+ with J- ->
J; U with J -> UJ), scopes (CCV brackets its samples; CRQL check applies below 2 x CRQL).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from labqc_frames import qc, results

from tracescreen.retest.labqc.qualifiers import combine_one
from tracescreen.retest.labqc.reasons import REASONS, SUGGESTED_ACTIONS
from tracescreen.retest.labqc.review import review_lab_qc


def _q(review) -> dict:
    return dict(zip(review.qualified["sample_id"], review.qualified["lab_qc_qualifier"]))


def test_matrix_spike_failure_qualifies_the_batch_for_its_analyte_and_fraction():
    res = results({"sample_id": "A", "value_ug_L": 5.0},
                  {"sample_id": "B", "detected": False},
                  {"sample_id": "C", "value_ug_L": 5.0, "fraction": "dissolved"},
                  {"sample_id": "D", "value_ug_L": 5.0, "analyte": "copper"},
                  {"sample_id": "E", "value_ug_L": 5.0, "batch": "B2"},
                  {"sample_id": "MB", "detected": False, "sample_type": "lab_blank"})
    rev = review_lab_qc(res, qc({"element": "ms", "analyte": "lead", "fraction": "total", "result_ug_L": 15.0,
                                 "original_ug_L": 5.0, "spike_added_ug_L": 20.0}))    # 50 %: J- / UJ
    assert _q(rev) == {"A": "J-", "B": "UJ", "C": "", "D": "", "E": "", "MB": ""}
    assert set(rev.retest["reason"]) == {"spike_recovery_low", "qc_summary_missing"}
    low = rev.retest[rev.retest["reason"] == "spike_recovery_low"]
    assert sorted(low["sample_id"]) == ["A", "B"]
    assert "recovery 50 % outside 75-125 %" in low["detail"].iloc[0]
    assert rev.retest.loc[rev.retest["reason"] == "qc_summary_missing", "sample_id"].tolist() == ["E"]


def test_ccv_brackets_the_samples_between_its_neighbouring_checks():
    t = pd.Timestamp("2024-05-02 08:00")
    res = results(*[{"sample_id": f"S{i}", "value_ug_L": 5.0, "analysed_at": t + pd.Timedelta(minutes=m)}
                    for i, m in enumerate([5, 15, 25, 35])])
    checks = qc({"element": "ccv", "analyte": "lead", "result_ug_L": 50.0, "true_value_ug_L": 50.0,
                 "analysed_at": t + pd.Timedelta(minutes=10)},
                {"element": "ccv", "analyte": "lead", "result_ug_L": 44.0, "true_value_ug_L": 50.0,   # 88 %
                 "analysed_at": t + pd.Timedelta(minutes=20)},
                {"element": "ccv", "analyte": "lead", "result_ug_L": 50.0, "true_value_ug_L": 50.0,
                 "analysed_at": t + pd.Timedelta(minutes=30)})
    rev = review_lab_qc(res, checks)
    assert _q(rev) == {"S0": "", "S1": "J-", "S2": "J-", "S3": ""}


def test_low_check_applies_below_twice_the_quantitation_limit():
    res = results({"sample_id": "lo", "value_ug_L": 1.99}, {"sample_id": "hi", "value_ug_L": 2.0},
                  {"sample_id": "nd", "detected": False, "detection_limit_ug_L": 0.5})
    rev = review_lab_qc(res, qc({"element": "low_check", "analyte": "lead", "result_ug_L": 0.6,
                                 "true_value_ug_L": 1.0}))                         # 60 %: J- / UJ
    assert _q(rev) == {"lo": "J-", "hi": "", "nd": "UJ"}


@pytest.mark.parametrize("blank,ql,value,detected,expected", [
    (0.5, 1.0, 1.0, True, "U"),     # result <= CRQL: U
    (0.5, 1.0, 1.01, True, ""),     # result > CRQL, blank <= CRQL: not qualified
    (3.0, 1.0, 3.0, True, "U"),     # CRQL < result <= blank (blank > CRQL): U
    (3.0, 1.0, 3.01, True, ""),     # result above the blank: professional judgement, not qualified
    (3.0, 1.0, np.nan, False, ""),  # non-detects: not qualified by a positive blank
    (-0.5, 1.0, np.nan, False, "UJ"),  # negative blank: non-detects UJ
    (-0.5, 1.0, 4.99, True, "J-"),     # negative blank: detects below 10 x |blank| J-
    (-0.5, 1.0, 5.0, True, ""),
    (0.5, np.nan, 2.49, True, "U"),    # no quantitation limit: the older 5 x blank rule (common practice)
    (0.5, np.nan, 2.5, True, ""),
])
def test_blank_tiers(blank, ql, value, detected, expected):
    res = results({"sample_id": "X", "value_ug_L": value, "detected": detected, "analyte": "zinc"})
    rev = review_lab_qc(res, qc({"element": "method_blank", "analyte": "zinc", "result_ug_L": blank,
                                 "detection_limit_ug_L": 0.2, "quantitation_limit_ug_L": ql}))
    assert _q(rev)["X"] == expected
    if expected == "U":
        assert rev.qualified["nondetect_limit_ug_L"].iloc[0] == (ql if np.isfinite(ql) and value <= ql else value)


def test_the_most_protective_qualifier_wins():
    assert combine_one(["J-", "R"], True) == "R"
    assert combine_one(["J+", "J-"], True) == "J"
    assert combine_one(["U", "J+"], True) == "UJ"
    assert combine_one(["U"], True) == "U"
    assert combine_one(["J", "J-"], True) == "J-"
    assert combine_one(["UJ"], False) == "UJ"
    assert combine_one([""], False) == ""
    res = results({"sample_id": "A", "value_ug_L": 5.0}, {"sample_id": "B", "value_ug_L": 5.0})
    rev = review_lab_qc(res, qc({"element": "ms", "analyte": "lead", "result_ug_L": 35.0, "original_ug_L": 5.0,
                                 "spike_added_ug_L": 20.0},                         # 150 %: J+
                                {"element": "lcs", "analyte": "lead", "result_ug_L": 15.0,
                                 "spike_added_ug_L": 20.0},                         # 75 %: J-
                                {"element": "ccv", "analyte": "lead", "result_ug_L": 30.0,
                                 "true_value_ug_L": 50.0}))                         # 60 %: R
    assert set(_q(rev).values()) == {"R"}
    reasons = rev.qualified["lab_qc_reasons"].iloc[0]
    assert "ms J+" in reasons and "lcs J-" in reasons and "ccv R" in reasons
    assert set(rev.retest["reason"]) == {"spike_recovery_high", "control_sample_out", "calibration_check_failed"}


def test_internal_standard_qualifies_every_analyte_of_its_sample_only():
    res = results({"sample_id": "S1", "value_ug_L": 2.0}, {"sample_id": "S1", "analyte": "copper", "value_ug_L": 3.0},
                  {"sample_id": "S2", "value_ug_L": 2.0})
    rev = review_lab_qc(res, qc({"element": "internal_standard", "analyte": "indium", "qc_sample_id": "S1",
                                 "reported_recovery": 140.0}))
    assert rev.qualified["lab_qc_qualifier"].tolist() == ["J", "J", ""]
    assert set(rev.retest["reason"]) == {"internal_standard_out"}


def test_batch_narrative_says_what_was_reviewed_outside_qualified_and_absent():
    res = results({"sample_id": "A", "value_ug_L": 5.0})
    rev = review_lab_qc(res, qc({"element": "ms", "analyte": "lead", "result_ug_L": 15.0, "original_ug_L": 5.0,
                                 "spike_added_ug_L": 20.0, "qc_sample_id": "A-MS"},
                                {"element": "ms", "analyte": "iron", "result_ug_L": 900.0, "original_ug_L": 850.0,
                                 "spike_added_ug_L": 100.0}))
    b = rev.batches.iloc[0]
    assert (b["lab"], b["batch"], b["results"], b["qc_rows"], b["outside"], b["not_judged"]) == ("Lab A", "B1", 1, 2, 1, 1)
    assert b["qualifiers"] == "J- 1"
    text = b["narrative"]
    assert "Batch B1 of Lab A: 1 result, 2 QC rows reviewed (matrix spike 2)" in text
    assert "lead matrix spike (A-MS): recovery 50 % outside 75-125 %" in text
    assert "4 x spike added" in text and "Results qualified: J- 1" in text
    assert "Not in the file: method blank, laboratory control sample, continuing calibration verification" in text


def test_every_reason_has_an_action():
    assert set(SUGGESTED_ACTIONS) == set(REASONS)


def test_no_qc_rows_no_qualifiers():
    res = results({"sample_id": "A", "value_ug_L": 5.0})
    rev = review_lab_qc(res, qc())
    assert _q(rev) == {"A": ""} and rev.retest.empty and rev.verdicts.empty
