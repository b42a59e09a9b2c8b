"""Each QC element family on constructed rows: the measure, the not-judged rules, the qualifiers.

Formulas: spike recovery 100 (spiked - unspiked) / added (US EPA SW-846 Method 1312 section 8.2.4,
seen); a spike on a sample below the MDL uses zero for the sample (CLP inorganic statement of work,
Exhibit C 12.6.7, as quoted on the WEF forum, seen); RPD = 100 |A - B| / ((A + B) / 2) (common
practice). Windows and tiers: see test_retest_labqc_windows.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from labqc_frames import qc, results

from tracescreen.retest.labqc.blanks import review_blanks
from tracescreen.retest.labqc.calibration_checks import review_calibration_checks
from tracescreen.retest.labqc.interference import review_ics, review_internal_standards, review_serial_dilutions
from tracescreen.retest.labqc.precision import review_lab_duplicates, review_pairs, rpd
from tracescreen.retest.labqc.spikes import review_spikes, spike_recovery


def test_spike_recovery_formula():
    # SW-846 1312 8.2.4: %R = 100 (Xs - Xu) / K
    assert spike_recovery([25.8], [4.72], [20.0])[0] == pytest.approx(105.4)
    assert np.isnan(spike_recovery([1.0], [0.0], [0.0])[0])


def test_matrix_spike_not_judged_above_four_times_the_spike():
    # NFG 2020 (memory): not evaluated when the sample exceeds 4 x the spike added
    v = review_spikes(qc({"element": "ms", "analyte": "iron", "result_ug_L": 900.0, "original_ug_L": 800.0,
                          "spike_added_ug_L": 200.0},                 # exactly 4 x: judged (50 % -> J-)
                         {"element": "ms", "analyte": "iron", "result_ug_L": 900.0, "original_ug_L": 800.01,
                          "spike_added_ug_L": 200.0}))                # beside: not judged
    assert list(v["verdict"]) == ["below", "not_judged"]
    assert v["value"].iloc[0] == pytest.approx(50.0)
    assert "4 x spike added" in v["rule"].iloc[1]


def test_matrix_spike_on_a_nondetect_sample_uses_zero_and_a_nondetect_spike_found_nothing():
    v = review_spikes(qc({"element": "ms", "analyte": "lead", "result_ug_L": 18.0, "original_ug_L": 0.0,
                          "spike_added_ug_L": 20.0},
                         {"element": "ms", "analyte": "lead", "result_ug_L": np.nan, "detected": False,
                          "original_ug_L": 0.0, "spike_added_ug_L": 20.0}))
    assert v["value"].tolist() == pytest.approx([90.0, 0.0])
    assert v["nondetect_qualifier"].tolist() == ["", "R"]        # < 30 %: non-detects R (NFG 2020, memory)


def test_control_sample_recovery_against_true_value_and_lab_limits():
    v = review_spikes(qc({"element": "lcs", "analyte": "copper", "result_ug_L": 18.4, "spike_added_ug_L": 20.0},
                         {"element": "lcs", "analyte": "copper", "result_ug_L": 18.4, "true_value_ug_L": 20.0,
                          "recovery_low": 95.0, "recovery_high": 105.0, "reported_recovery": 92.0}))
    assert v["value"].tolist() == pytest.approx([92.0, 92.0])
    assert v["verdict"].tolist() == ["within", "below"]           # 80-120 default; the lab's 95-105 % is stricter
    assert v["window_from"].tolist() == ["guideline", "lab"]
    assert "laboratory's recovery 92" in v["detail"].iloc[1]


def test_reported_recovery_used_when_amounts_are_missing():
    v = review_spikes(qc({"element": "ms", "analyte": "zinc", "reported_recovery": 140.0}))
    assert v["value"].iloc[0] == 140.0 and v["detect_qualifier"].iloc[0] == "J+"


def test_rpd():
    # 99900 vs 101000 (real MS/MSD sodium pair in tests/data): 1.095 %, the lab reports 1
    assert rpd([99900.0], [101000.0])[0] == pytest.approx(100 * 1100 / 100450)
    assert rpd([0.0], [0.0])[0] == 0.0


def test_lab_duplicate_rpd_rule_and_absolute_rule_at_the_five_times_edge():
    # NFG 2020 (memory): RPD <= 20 % when both >= 5 x QL; else |A - B| <= QL
    rows = results({"sample_id": "S-1", "value_ug_L": 10.0},            # 5 x QL 2: RPD rule
                   {"sample_id": "S-2", "value_ug_L": 9.99},            # beside: absolute rule
                   {"sample_id": "S-3", "value_ug_L": 10.0})
    dups = qc({"element": "lab_duplicate", "parent_sample_id": "S-1", "analyte": "lead", "fraction": "total",
               "result_ug_L": 12.3, "quantitation_limit_ug_L": 2.0},   # RPD 20.6 % -> J/UJ
              {"element": "lab_duplicate", "parent_sample_id": "S-2", "analyte": "lead", "fraction": "total",
               "result_ug_L": 12.0, "quantitation_limit_ug_L": 2.0},   # |diff| 2.01 > QL 2 -> J
              {"element": "lab_duplicate", "parent_sample_id": "S-3", "analyte": "lead", "fraction": "total",
               "result_ug_L": 12.0, "quantitation_limit_ug_L": 2.0})   # RPD 18.2 % -> within
    v = review_lab_duplicates(dups, rows).sort_values("row")
    assert v["measure"].tolist() == ["rpd", "absolute_difference_in_ql", "rpd"]
    assert v["value"].tolist() == pytest.approx([100 * 2.3 / 11.15, 2.01 / 2.0, 100 * 2 / 11])
    assert v["verdict"].tolist() == ["above", "above", "within"]
    assert v["detect_qualifier"].tolist() == ["J", "J", ""]


def test_spike_duplicate_pairs_by_parent_and_falls_back_to_the_labs_rpd():
    rows = qc({"element": "ms", "parent_sample_id": "P1", "analyte": "lead", "result_ug_L": 21.7},
              {"element": "msd", "parent_sample_id": "P1", "analyte": "lead", "result_ug_L": 27.0},
              {"element": "msd", "parent_sample_id": "P2", "analyte": "copper", "reported_rpd": 3.0,
               "rpd_limit": 20.0})
    v = review_pairs(rows)
    assert v["value"].tolist() == pytest.approx([100 * 5.3 / 24.35, 3.0])
    assert v["verdict"].tolist() == ["above", "within"]
    assert "no MS row" in v["detail"].iloc[1]


def test_calibration_checks_mercury_and_low_check_quantitation_limit():
    v = review_calibration_checks(qc(
        {"element": "ccv", "analyte": "lead", "result_ug_L": 44.0, "true_value_ug_L": 50.0},          # 88 %
        {"element": "ccv", "analyte": "mercury", "result_ug_L": 4.4, "true_value_ug_L": 5.0},         # 88 %: Hg 85-115
        {"element": "low_check", "analyte": "lead", "result_ug_L": 1.3, "true_value_ug_L": 1.0}))     # 130 %
    by = v.set_index("analyte", append=True)
    assert v.loc[v["element"] == "ccv", "verdict"].tolist() == ["below", "within"]
    assert v.loc[v["element"] == "low_check", "verdict"].item() == "within"
    assert v.loc[v["element"] == "low_check", "quantitation_limit_ug_L"].item() == 1.0   # the standard's level
    assert len(by) == 3


def test_blank_verdicts_at_the_detection_limit():
    v = review_blanks(qc({"element": "method_blank", "analyte": "zinc", "result_ug_L": 2.5,
                          "detection_limit_ug_L": 2.5},                        # at DL: contaminated
                         {"element": "method_blank", "analyte": "zinc", "result_ug_L": 2.49,
                          "detection_limit_ug_L": 2.5},                        # below DL: clean
                         {"element": "calibration_blank", "analyte": "zinc", "result_ug_L": -2.5,
                          "detection_limit_ug_L": 2.5},                        # at -DL: negative
                         {"element": "method_blank", "analyte": "zinc", "detected": False,
                          "detection_limit_ug_L": 2.5})).sort_values("row")
    assert v["verdict"].tolist() == ["above", "within", "below", "within"]


def test_serial_dilution_judged_only_fifty_times_above_the_detection_limit():
    # NFG 2020 (memory): %D <= 10 % when the original is >= 50 x MDL
    rows = qc({"element": "serial_dilution", "analyte": "iron", "original_ug_L": 500.0, "result_ug_L": 560.0,
               "detection_limit_ug_L": 10.0},          # 50 x DL: %D 12 % -> J
              {"element": "serial_dilution", "analyte": "iron", "original_ug_L": 499.0, "result_ug_L": 560.0,
               "detection_limit_ug_L": 10.0})          # beside: not judged
    v = review_serial_dilutions(rows)
    assert v["verdict"].tolist() == ["above", "not_judged"]
    assert v["value"].iloc[0] == pytest.approx(12.0)
    assert "biased low" in v["detail"].iloc[0]


def test_interference_checks():
    v = review_ics(qc({"element": "ics_ab", "analyte": "cadmium", "result_ug_L": 0.9, "true_value_ug_L": 1.0},
                      {"element": "ics_a", "analyte": "cadmium", "result_ug_L": 1.2, "quantitation_limit_ug_L": 1.0},
                      {"element": "ics_a", "analyte": "lead", "result_ug_L": -1.0, "quantitation_limit_ug_L": 1.0},
                      {"element": "ics_a", "analyte": "zinc", "result_ug_L": 0.5}))
    assert v["verdict"].tolist() == ["within", "above", "within", "not_judged"]
    assert v["detect_qualifier"].tolist() == ["", "J+", "", ""]


def test_internal_standard_scope_is_the_sample():
    v = review_internal_standards(qc({"element": "internal_standard", "internal_standard": "indium",
                                      "analyte": "indium", "qc_sample_id": "S-9", "reported_recovery": 55.0}))
    assert v["verdict"].item() == "below" and v["scope"].item() == "sample"
    assert v["nondetect_qualifier"].item() == "UJ"
