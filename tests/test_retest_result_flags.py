"""Retest flags on one screened result (tracescreen.retest.result_flags) on constructed cases at their threshold edges."""

import pytest
from flag_frames import quarterly_series as _series
from flag_frames import screening

from tracescreen.retest import result_flags as flags
from tracescreen.retest.rows import RETEST_COLUMNS

# WHO Guidelines for Drinking-water Quality, 4th ed. incl. 1st and 2nd addenda (2022), Annex 3:
# lead 0.01 mg/L = 10 µg/L; EU Directive 2020/2184 Annex I Part B: lead 5 µg/L from 2036-01-12.
WHO_LEAD = ("who-dw", 10.0)
EU_LEAD_2036 = ("eu-dw", 5.0)


def test_near_limit_edges():
    """Detected at exactly 80 % of the WHO lead value (8 of 10 µg/L) is flagged, 7.99 is not (80 %: common practice)."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=8.0),
            dict(sample_id="B", sampled_at="2024-01-01", value=7.99),
            dict(sample_id="C", sampled_at="2024-01-01", value=10.0),
            dict(sample_id="D", sampled_at="2024-01-01", value=10.01),
            dict(sample_id="E", sampled_at="2024-01-01", value=0.008 * 1000)]  # 0.008 mg/L in µg/L
    out = flags.near_limit(screening(rows, [WHO_LEAD]))
    assert list(out.columns) == RETEST_COLUMNS
    assert sorted(out["sample_id"]) == ["A", "C", "E"]  # D exceeds: an exceedance, not near-limit
    assert (out["reason"] == "near_limit").all()
    assert "80 % of limit 10 µg/L" in out.set_index("sample_id").loc["A", "detail"]


def test_near_limit_option_and_float_roundoff():
    """The share is an option; a conversion round-off just under 80 % still flags (relative tolerance 1e-9)."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=8.0 * (1 - 1e-12)),
            dict(sample_id="B", sampled_at="2024-01-01", value=8.9)]
    assert sorted(flags.near_limit(screening(rows, [WHO_LEAD]))["sample_id"]) == ["A", "B"]
    assert list(flags.near_limit(screening(rows, [WHO_LEAD]), fraction=0.9)["sample_id"]) == []
    with pytest.raises(ValueError):
        flags.near_limit(screening(rows, [WHO_LEAD]), fraction=1.5)


def test_dl_too_high_gives_detection_limit_needed():
    """A non-detect at <20 µg/L against lead limits 10 (WHO 2022) and 5 µg/L (EU 2020/2184) needs a DL <= 5 µg/L."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", nd=True, detection_limit_ug_L=20.0),
            dict(sample_id="B", sampled_at="2024-01-01", nd=True, detection_limit_ug_L=5.0),  # equal: meets
            dict(sample_id="C", sampled_at="2024-01-01", nd=True, detection_limit_ug_L=8.0)]
    out = flags.dl_too_high(screening(rows, [WHO_LEAD, EU_LEAD_2036])).set_index("sample_id")
    assert sorted(out.index) == ["A", "C"]
    assert out.loc["A", "detail"].endswith("detection limit needed: <= 5 µg/L")
    assert "(and 1 other limit(s))" in out.loc["A", "detail"]
    assert out.loc["C", "detail"].endswith("<= 5 µg/L")


def test_first_exceedance_whole_history():
    """Only the first exceedance of a series is flagged with the default (whole history) look-back."""
    vals = [2, 3, 12, 2, 15, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 14]
    out = flags.first_exceedance(screening(_series(vals), [WHO_LEAD]))
    assert list(out["sample_id"]) == ["Q2"]
    assert "12 µg/L > limit 10 µg/L" in out["detail"][0]


def test_first_exceedance_lookback_in_sampling_dates():
    """Look-back of 2 sampling dates: an exceedance 2 dates after the last is not first, 12 dates after is."""
    vals = [2, 3, 12, 2, 15, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 14]
    out = flags.first_exceedance(screening(_series(vals), [WHO_LEAD]), lookback=2)
    assert list(out["sample_id"]) == ["Q2", "Q16"]


def test_first_exceedance_lookback_duration_edge():
    """Look-back of 730 days: an earlier exceedance exactly 730 days before counts, 731 days does not."""
    rows = [dict(sample_id="A", sampled_at="2020-01-01", value=12),
            dict(sample_id="B", sampled_at="2021-12-31", value=12),  # 730 days after A
            dict(sample_id="C", site_id="S2", sampled_at="2020-01-01", value=12),
            dict(sample_id="D", site_id="S2", sampled_at="2022-01-01", value=12)]  # 731 days after C
    out = flags.first_exceedance(screening(rows, [WHO_LEAD]), lookback="730D")
    assert sorted(out["sample_id"]) == ["A", "C", "D"]


def test_first_exceedance_ignores_qc_samples():
    """A field duplicate that exceeds is a QC sample (status qc_sample), not a first exceedance."""
    rows = [dict(sample_id="A", sampled_at="2020-01-01", value=2),
            dict(sample_id="A-D", sampled_at="2020-01-01", value=12, sample_type="field_duplicate",
                 parent_sample_id="A")]
    assert flags.first_exceedance(screening(rows, [WHO_LEAD])).empty


def test_uncertainty_straddles_limit_edges():
    """Limit 10 µg/L, U = 1: flagged for 9 < x <= 11 (Eurachem/CITAC 2021 guard band g = U; x + U = L meets beyond U)."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=9.0, uncertainty_ug_L=1.0),   # x + U = L
            dict(sample_id="B", sampled_at="2024-01-01", value=9.01, uncertainty_ug_L=1.0),
            dict(sample_id="C", sampled_at="2024-01-01", value=11.0, uncertainty_ug_L=1.0),  # x - U = L
            dict(sample_id="D", sampled_at="2024-01-01", value=11.01, uncertainty_ug_L=1.0),
            dict(sample_id="E", sampled_at="2024-01-01", value=9.9)]  # no uncertainty reported
    out = flags.uncertainty_straddles_limit(screening(rows, [WHO_LEAD])).set_index("sample_id")
    assert sorted(out.index) == ["B", "C"]
    assert "reported above" in out.loc["C", "detail"]
    assert "reported at or below" in out.loc["B", "detail"]


def test_period_basis_rows_are_not_single_result_flags():
    """A running-annual-mean row (40 CFR 141.23(i) basis) is judged in periods.csv, not as a first exceedance or near-limit result."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=12.0), dict(sample_id="B", sampled_at="2024-04-01", value=9.0)]
    scr = screening(rows, [WHO_LEAD]).assign(basis="running_annual_mean")
    assert flags.first_exceedance(scr).empty
    assert flags.near_limit(scr).empty


