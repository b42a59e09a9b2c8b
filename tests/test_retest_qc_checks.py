"""QC checks (tracescreen.retest.qc_checks) on constructed cases at their threshold edges."""

import pandas as pd
import pytest
from flag_frames import results, screening

from tracescreen.retest import qc_checks as qc
from tracescreen.retest.listing import REASONS, RetestOptions, retest_list
from tracescreen.retest.rows import RETEST_COLUMNS


def _pair(a, b, dl=1.0, a_nd=False, b_nd=False, tag="P"):
    return [dict(sample_id=tag, sampled_at="2024-03-01", value=a, nd=a_nd, detection_limit_ug_L=dl),
            dict(sample_id=tag + "-D", sampled_at="2024-03-01", value=b, nd=b_nd, detection_limit_ug_L=dl,
                 sample_type="field_duplicate", parent_sample_id=tag)]


def test_rpd_rule_edges():
    """RPD = |A−B|/((A+B)/2)×100 (US EPA data-review formula): 8.5/11.5 is exactly 30 % and passes, 8.5/11.6 (3.1/10.05 = 30.8 %) fails; 30 % common practice."""
    rows = _pair(8.5, 11.5, tag="P1") + _pair(8.5, 11.6, tag="P2")
    out = qc.duplicate_disagrees(results(rows))
    assert list(out.columns) == RETEST_COLUMNS
    assert sorted(out["sample_id"]) == ["P2", "P2-D"]  # both samples of the pair
    assert "RPD 30.8 % > 30 %" in out["detail"][0]


def test_duplicate_absolute_rule_below_five_times_dl():
    """Below 5 × DL the absolute difference is compared with 1 × DL: 2 vs 3 (diff = DL) passes, 2 vs 3.1 fails (common practice)."""
    rows = _pair(2.0, 3.0, tag="P1") + _pair(2.0, 3.1, tag="P2") + _pair(0, 2.1, a_nd=True, tag="P3") \
        + _pair(0, 0, a_nd=True, b_nd=True, tag="P4") + _pair(0, 1.9, a_nd=True, tag="P5")
    out = qc.duplicate_disagrees(results(rows))
    assert sorted(out["sample_id"]) == ["P2", "P2-D", "P3", "P3-D"]
    assert "<1 µg/L and 2.1 µg/L" in out.set_index("sample_id").loc["P3", "detail"]


def test_duplicate_rpd_option():
    """The RPD criterion is an option: 20 % (laboratory duplicates, US EPA NFG, from memory) flags a 26.8 % pair."""
    rows = _pair(10.0, 13.1)
    assert qc.duplicate_disagrees(results(rows)).empty
    assert len(qc.duplicate_disagrees(results(rows), rpd_percent=20)) == 2


def test_blank_contamination_five_times_rule():
    """Blank at 0.5 µg/L (DL 0.1) in batch B1: samples below 2.5 µg/L (5 × blank, common practice) are flagged, at 2.5 not."""
    base = dict(sampled_at="2024-03-01", detection_limit_ug_L=0.1, batch="B1")
    rows = [dict(base, sample_id="FB", sample_type="field_blank", value=0.5),
            dict(base, sample_id="A", value=2.4),
            dict(base, sample_id="B", value=2.5),
            dict(base, sample_id="C", nd=True),
            dict(base, sample_id="D", value=1.0, analyte="copper"),
            dict(base, sample_id="E", value=1.0, batch="B2"),
            dict(base, sample_id="F", value=1.0, lab="LabB"),
            dict(base, sample_id="G", value=1.0, fraction="dissolved")]
    out = qc.blank_contamination(results(rows))
    assert sorted(out["sample_id"]) == ["A", "G"]
    assert "field blank FB in batch B1 detected 0.5 µg/L" in out["detail"][0]


def test_blank_at_detection_limit_is_not_contamination():
    """A blank detected only at its detection limit is not 'above' it, so nothing is flagged (issue rule)."""
    base = dict(sampled_at="2024-03-01", detection_limit_ug_L=0.5, batch="B1")
    rows = [dict(base, sample_id="LB", sample_type="lab_blank", value=0.5),
            dict(base, sample_id="A", value=1.0)]
    assert qc.blank_contamination(results(rows)).empty


def test_dissolved_exceeds_total_edges():
    """Both > 5 × DL: dissolved 13 vs total 10 (30 %) passes, 13.1 fails; else D − T vs 2 × DL: 4 vs 2 passes, 4.1 fails (common practice)."""
    rows = []
    for sid, d, t, t_nd in (("A", 13.0, 10.0, False), ("B", 13.1, 10.0, False), ("C", 4.0, 2.0, False),
                            ("D", 4.1, 2.0, False), ("E", 3.1, 0, True), ("F", 2.9, 0, True)):
        rows.append(dict(sample_id=sid, sampled_at="2024-03-01", fraction="dissolved", value=d))
        rows.append(dict(sample_id=sid, sampled_at="2024-03-01", fraction="total", value=t, nd=t_nd))
    rows.append(dict(sample_id="G", sampled_at="2024-03-01", fraction="dissolved", nd=True, value=0))
    rows.append(dict(sample_id="G", sampled_at="2024-03-01", fraction="total", value=0.1))
    out = qc.dissolved_exceeds_total(results(rows))
    assert sorted(out["sample_id"].unique()) == ["B", "D", "E"]
    assert set(out["fraction"]) == {"dissolved", "total"}
    assert len(out) == 6


@pytest.mark.parametrize("analyte, sampled, ok, late", [
    # 40 CFR 136.3 Table II: mercury 28 days (from memory), Cr(VI) 24 hours (from memory), metals 6 months (checked)
    ("mercury", "2024-01-01", "2024-01-29", "2024-01-30"),
    ("chromium(vi)", "2024-01-01 08:00", "2024-01-02 08:00", "2024-01-02 09:00"),
    ("lead", "2024-01-31", "2024-07-31", "2024-08-01"),
])
def test_holding_time_edges(analyte, sampled, ok, late):
    """Analysis exactly at the end of the holding time is in time; later is flagged (40 CFR 136.3 Table II)."""
    rows = [dict(sample_id="OK", analyte=analyte, sampled_at=sampled, analysed_at=ok, value=1),
            dict(sample_id="LATE", analyte=analyte, sampled_at=sampled, analysed_at=late, value=1),
            dict(sample_id="NA", analyte=analyte, sampled_at=sampled, value=1)]
    out = qc.holding_time_exceeded(results(rows))
    assert list(out["sample_id"]) == ["LATE"]
    assert "40 CFR 136.3 Table II" in out["detail"][0]


def test_holding_time_option():
    """Holding times are an option: Cr(VI) buffered to pH 9.3-9.7 may be held 28 days (40 CFR 136.3 Table II, checked)."""
    rows = [dict(sample_id="A", analyte="chromium(vi)", sampled_at="2024-01-01", analysed_at="2024-01-20", value=1)]
    assert len(qc.holding_time_exceeded(results(rows))) == 1
    holds = dict(qc.HOLDING_TIMES, **{"chromium(vi)": pd.Timedelta(days=28)})
    assert qc.holding_time_exceeded(results(rows), holds).empty


def test_retest_list_combines_reasons_and_sorts():
    """retest_list gives several rows for a result with several reasons, in reason order, and validates reason names."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", analysed_at="2024-09-01", value=9.5, uncertainty_ug_L=1.0)]
    out = retest_list(screening(rows))
    assert list(out["reason"]) == ["near_limit", "uncertainty_straddles_limit", "holding_time_exceeded"]
    only = retest_list(screening(rows), RetestOptions(reasons=("near_limit",)))
    assert list(only["reason"]) == ["near_limit"]
    with pytest.raises(ValueError):
        retest_list(screening(rows), RetestOptions(reasons=("nonsense",)))
    assert set(REASONS) >= set(out["reason"])


def test_retest_list_keeps_period_basis_out_of_result_flags():
    """retest_list reads the basis column: a running-annual-mean exceedance is not a single-result first exceedance."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=12.0)]
    scr = screening(rows).assign(basis="running_annual_mean")
    assert retest_list(scr).empty
