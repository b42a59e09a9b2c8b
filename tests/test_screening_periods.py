"""Running annual means and period percentiles, on constructed cases worked by hand.

Each case states the window or period, the values that enter it under each non-detect rule, and
the arithmetic, so the expected numbers can be checked without the code. The percentile procedure
is 40 CFR 141.80(c)(3) as applied in state guidance (Kansas KDHE lead and copper FAQ; a state
90th-percentile worksheet: "round to the nearest whole number ... 0.5 or higher up").
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from flag_frames import results as make_results

from tracescreen.limits.load import LimitTableError, load_limits
from tracescreen.screening import percentiles, periods
from tracescreen.screening.screen import screen


def table(tmp_path, entries: str, settings: str = "{nondetect_rule: zero}", unit: str = "µg/L",
          name: str = "t.yaml", use: str = "drinking_water") -> object:
    p = tmp_path / name
    p.write_text(
        f"id: {p.stem}\nname: test table\nsource: constructed for a test\nuse: {use}\nunit: {unit}\n"
        f"settings: {settings}\nentries:\n{entries}", encoding="utf-8")
    return load_limits(p)


RAA_ENTRY = "  - {analyte: lead, fraction: total, value: 10, basis: running_annual_mean}\n"

# Quarterly lead at one site, limit 10 µg/L. "<2" is a non-detect with detection limit 2.
SERIES = [
    ("2020-01-15", 4.0, None), ("2020-04-15", None, 2.0), ("2020-07-15", 12.0, None),
    ("2020-10-15", None, 6.0), ("2021-01-15", 22.0, None), ("2021-04-20", 30.0, None),
]


def series_results(rows=SERIES, site="S1"):
    return make_results([
        {"site_id": site, "sample_id": f"{site}-{i}", "sampled_at": d, "value": v if v is not None else 0.0,
         "nd": v is None, "detection_limit_ug_L": dl if dl is not None else 1.0}
        for i, (d, v, dl) in enumerate(rows)])


def raa(tmp_path, rule: str, res=None):
    lim = table(tmp_path, RAA_ENTRY, f"{{nondetect_rule: {rule}}}")
    out = screen(res if res is not None else series_results(), lim)
    return out.sort_values("sampled_at").reset_index(drop=True), periods.period_table(out, lim)


def test_running_annual_mean_windows_and_values_nondetects_as_zero(tmp_path):
    """Windows are (day - 12 months, day]; means with non-detects as 0 worked by hand (see SERIES)."""
    out, per = raa(tmp_path, "zero")
    # 1: {4} = 4; 2: {4,0} = 2; 3: {4,0,12} = 16/3; 4: {4,0,12,0} = 4;
    # 5: 2020-01-15 leaves the window -> {0,12,0,22} = 8.5; 6: 2020-04-15 leaves -> {12,0,22,30} = 16
    assert out["period_value_ug_L"].tolist() == pytest.approx([4.0, 2.0, 16 / 3, 4.0, 8.5, 16.0])
    assert out["status"].tolist() == ["meets"] * 5 + ["exceeds"]
    assert per["n_results"].tolist() == [1, 2, 3, 4, 4, 4]
    assert per["n_nondetects"].tolist() == [0, 1, 1, 2, 2, 1]
    assert per["nondetect_rule"].unique().tolist() == ["zero"]
    # results that formed the last value: the four samples of 2020-07-15 .. 2021-04-20
    assert per["results"].iloc[-1] == ("S1-2 (2020-07-15): 12.0; S1-3 (2020-10-15): <6.0; "
                                       "S1-4 (2021-01-15): 22.0; S1-5 (2021-04-20): 30.0")
    assert per["period_start"].iloc[-1] == pd.Timestamp("2020-04-21")
    assert "less than 12 months of record" in per["note"].iloc[0]
    assert "less than 12 months of record" not in per["note"].iloc[-1]
    # every screening row of the period basis points at its period value
    assert set(out["period_id"]) == set(per["period_id"])


def test_running_annual_mean_bounds_and_note(tmp_path):
    """Window 5 {<2, 12, <6, 22}: 8.5 with ND = 0, 10.5 with ND = DL; meets under 'zero' with a note."""
    out, per = raa(tmp_path, "zero")
    row = per.iloc[4]
    assert (row["value_nondetects_zero_ug_L"], row["value_nondetects_at_dl_ug_L"]) == pytest.approx((8.5, 10.5))
    assert row["status"] == "meets"
    assert "above the limit with non-detects at their detection limit" in row["note"]


@pytest.mark.parametrize("rule, expected_5, status_5, expected_6", [
    ("half_dl", (1 + 12 + 3 + 22) / 4, "meets", (12 + 3 + 22 + 30) / 4),          # 9.5; 16.75
    ("dl", (2 + 12 + 6 + 22) / 4, "nondetect_inconclusive", (12 + 6 + 22 + 30) / 4),  # 10.5; 17.5
    # Kaplan-Meier, window 5: F(12^-) = 3/4 * 2/3 = 1/2 at DL 2 (Efron), jumps 1/4 at 12 and 22:
    # 12/4 + 22/4 + 2/2 = 9.5. Window 6: below = 1/4 at DL 6; (12 + 22 + 30)/4 + 6/4 = 17.5.
    ("kaplan_meier", 9.5, "meets", 17.5),
])
def test_running_annual_mean_each_nondetect_rule(tmp_path, rule, expected_5, status_5, expected_6):
    """Windows 5 and 6 under each non-detect rule (hand arithmetic beside each case)."""
    out, per = raa(tmp_path, rule)
    assert per["value_ug_L"].iloc[4] == pytest.approx(expected_5)
    assert per["status"].iloc[4] == status_5
    assert per["value_ug_L"].iloc[5] == pytest.approx(expected_6)
    assert per["status"].iloc[5] == "exceeds"
    assert (per["nondetect_rule"] == rule).all()


def test_dl_rule_never_turns_nondetects_into_an_exceedance(tmp_path):
    """Window 5 under 'dl' is 10.5 > 10 only through non-detects (8.5 with ND = 0): inconclusive, not exceeds."""
    out, per = raa(tmp_path, "dl")
    assert per["status"].iloc[4] == "nondetect_inconclusive"
    assert "only because of non-detects" in per["note"].iloc[4]


def test_running_annual_mean_all_nondetects(tmp_path):
    """Only non-detects: <5 then <20 (limit 10) -> nondetect_meets, then nondetect_inconclusive (DL 20 > 10)."""
    res = series_results([("2021-01-10", None, 5.0), ("2021-03-10", None, 20.0)], site="S2")
    out, per = raa(tmp_path, "zero", res)
    assert per["status"].tolist() == ["nondetect_meets", "nondetect_inconclusive"]
    assert per["value_ug_L"].tolist() == [0.0, 0.0]


def test_running_annual_mean_separates_sites_and_skips_qc(tmp_path):
    """Windows never mix sites; a field blank does not enter the mean (QC rows stay qc_sample)."""
    res = pd.concat([series_results(SERIES[:2], "S1"), series_results(SERIES[2:4], "S2")], ignore_index=True)
    blank = make_results([{"site_id": "S1", "sample_id": "FB", "sampled_at": "2020-03-01", "value": 99.0,
                           "sample_type": "field_blank"}])
    out, per = raa(tmp_path, "zero", pd.concat([res, blank], ignore_index=True))
    assert per.groupby("site_id")["value_ug_L"].last().to_dict() == {"S1": 2.0, "S2": 6.0}
    assert out.loc[out["sample_id"] == "FB", "status"].tolist() == ["qc_sample"]


PCT_ENTRY = ("  - {analyte: lead, fraction: total, value: 15, basis: percentile, percentile: 90, "
             "period: half_year}\n")


def pct(tmp_path, rows, rule="zero", method="epa_lcr"):
    lim = table(tmp_path, PCT_ENTRY, f"{{nondetect_rule: {rule}, percentile_method: {method}}}")
    res = make_results(rows)
    out = screen(res, lim)
    return out, periods.period_table(out, lim)


def test_percentile_ten_results(tmp_path):
    """10 results in 2021-H1: 0.9 x 10 = 9 -> the 9th smallest, 12.5 (KDHE procedure); 12.5 <= 15 meets."""
    vals = [1.2, 2.3, 3.1, 4.0, 4.5, 5.2, 6.8, 7.4, 12.5, 14.1]
    rows = [{"sampled_at": f"2021-0{1 + i % 6}-1{i % 9}", "value": v} for i, v in enumerate(vals)]
    out, per = pct(tmp_path, rows)
    assert len(per) == 1 and per["period"].iloc[0] == "2021-H1"
    assert per["value_ug_L"].iloc[0] == 12.5 and per["status"].iloc[0] == "meets"
    assert per["period_start"].iloc[0] == pd.Timestamp("2021-01-01")
    assert per["period_end"].iloc[0] == pd.Timestamp("2021-06-30")
    assert (out["period_value_ug_L"] == 12.5).all() and (out["status"] == "meets").all()


def test_percentile_five_results_mean_of_two_highest(tmp_path):
    """5 results 8, 8, 8, 11, 20 µg/L: (11 + 20)/2 = 15.5 > 15 exceeds (40 CFR 141.80(c)(3); state worked example 0.0155 mg/L)."""
    rows = [{"sampled_at": f"2021-{7 + i:02d}-05", "value": v} for i, v in enumerate([8, 8, 8, 11, 20])]
    out, per = pct(tmp_path, rows)
    assert per["period"].iloc[0] == "2021-H2"
    assert per["value_ug_L"].iloc[0] == 15.5 and per["status"].iloc[0] == "exceeds"


@pytest.mark.parametrize("n, rank", [(4, 4), (6, 5), (8, 7), (10, 9), (12, 11), (15, 14), (18, 16), (25, 23)])
def test_epa_lcr_rank(n, rank):
    """Rank = 0.9 n rounded to the nearest whole number, halves up (6 -> 5.4 -> 5th; 15 -> 13.5 -> 14th; n < 5: highest)."""
    assert percentiles.percentile(np.arange(1.0, n + 1), 90, "epa_lcr") == float(rank)


@pytest.mark.parametrize("method, expected", [
    # values 1..10, p = 90: type 1 (inverted CDF) 9; type 7 1 + 0.9 * 9 = 9.1; type 5 (Hazen) position
    # 0.9 * 10 + 0.5 = 9.5 -> 9.5; type 6 (Weibull) position 0.9 * 11 = 9.9 -> 9.9
    ("nearest_rank", 9.0), ("linear", 9.1), ("hazen", 9.5), ("weibull", 9.9),
])
def test_percentile_methods_hyndman_fan(method, expected):
    """Named methods give Hyndman & Fan (1996) sample quantiles, worked by hand for 1..10 at p = 90."""
    assert percentiles.percentile(np.arange(1.0, 11.0), 90, method) == pytest.approx(expected)


def test_percentile_nondetect_rules(tmp_path):
    """Eight <1, one <20 and 30 (limit 15): 9th value is 0 with ND = 0 (meets), 20 with ND = DL -> inconclusive."""
    rows = ([{"sampled_at": "2022-02-01", "value": 0, "nd": True, "detection_limit_ug_L": 1.0}] * 8
            + [{"sampled_at": "2022-03-01", "value": 0, "nd": True, "detection_limit_ug_L": 20.0},
               {"sampled_at": "2022-04-01", "value": 30.0}])
    _, per_zero = pct(tmp_path, rows, "zero")
    assert per_zero["value_ug_L"].iloc[0] == 0.0 and per_zero["status"].iloc[0] == "meets"
    assert "above the limit with non-detects at their detection limit" in per_zero["note"].iloc[0]
    assert per_zero["value_nondetects_at_dl_ug_L"].iloc[0] == 20.0
    _, per_half = pct(tmp_path, rows, "half_dl")
    assert per_half["value_ug_L"].iloc[0] == 10.0 and per_half["status"].iloc[0] == "meets"
    _, per_dl = pct(tmp_path, rows, "dl")
    assert per_dl["value_ug_L"].iloc[0] == 20.0 and per_dl["status"].iloc[0] == "nondetect_inconclusive"
    assert per_dl["n_nondetects"].iloc[0] == 9


def test_percentile_kaplan_meier(tmp_path):
    """KM 90th percentile of <1, 2..10: F is the ECDF here (F(9) = 0.9) -> 9; of nine <5 and 20: below the lowest detect -> censored."""
    rows = [{"sampled_at": "2022-08-01", "value": 0, "nd": True, "detection_limit_ug_L": 1.0}] + [
        {"sampled_at": "2022-09-01", "value": float(v)} for v in range(2, 11)]
    _, per = pct(tmp_path, rows, "kaplan_meier", "nearest_rank")
    assert per["value_ug_L"].iloc[0] == 9.0 and per["status"].iloc[0] == "meets"
    rows = [{"sampled_at": "2022-08-01", "value": 0, "nd": True, "detection_limit_ug_L": 5.0}] * 9 + [
        {"sampled_at": "2022-09-01", "value": 20.0}]
    _, per = pct(tmp_path, rows, "kaplan_meier", "nearest_rank")
    assert per["status"].iloc[0] == "nondetect_meets"


def test_percentile_limit_in_force_at_period_end(tmp_path):
    """A period spanning an effective date takes the limit in force on its last sample date, and says so."""
    entries = ("  - {analyte: lead, fraction: total, value: 15, basis: percentile, percentile: 90, period: half_year,"
               " effective_to: 2027-10-31}\n"
               "  - {analyte: lead, fraction: total, value: 10, basis: percentile, percentile: 90, period: half_year,"
               " effective_from: 2027-11-01}\n")
    lim = table(tmp_path, entries, "{nondetect_rule: zero, percentile_method: epa_lcr}")
    res = make_results([{"sampled_at": d, "value": 12.0} for d in ("2027-05-01", "2027-10-15", "2027-11-15")])
    per = periods.period_table(screen(res, lim), lim)
    assert per[["period", "limit_ug_L", "status"]].values.tolist() == [
        ["2027-H1", 15.0, "meets"], ["2027-H2", 10.0, "exceeds"]]
    assert "limit changed within the period" in per["note"].iloc[1]


@pytest.mark.parametrize("entries, settings, message", [
    (PCT_ENTRY, "{percentile_method: epa_lcr}", "needs the table setting 'nondetect_rule'"),
    (PCT_ENTRY, "{nondetect_rule: zero}", "key 'percentile_method'"),
    (PCT_ENTRY.replace("percentile: 90", "percentile: 95"), "{nondetect_rule: zero, percentile_method: epa_lcr}",
     "epa_lcr is defined for the 90th percentile only"),
    (PCT_ENTRY.replace("half_year", "fortnight"), "{nondetect_rule: zero, percentile_method: linear}", "key 'period'"),
    (PCT_ENTRY.replace("percentile: 90", "percentile: 190"), "{nondetect_rule: zero, percentile_method: linear}",
     "between 0 and 100"),
    (RAA_ENTRY.replace("}", ", period: month}"), "{nondetect_rule: zero}", "only applies with basis 'percentile'"),
    (RAA_ENTRY, "{nondetect_rule: median}", "'median' is not one of"),
])
def test_period_keys_are_checked_at_load(tmp_path, entries, settings, message):
    """Missing or wrong period keys are load errors naming the key (common practice: fail loudly)."""
    with pytest.raises(LimitTableError, match=message):
        table(tmp_path, entries, settings)


def test_a_running_mean_depends_on_its_own_series_only(tmp_path):
    """A non-detect without a detection limit at one site leaves another site's running means as worked
    by hand (SERIES, non-detects at their DL), and the same site's windows without it have a mean.

    Reference: the definition of the running annual mean (40 CFR 141.23(i)): the mean of the site's own
    results in the 12 months to each sample; the values are worked by hand below.
    """
    other = series_results([("2019-01-10", None, np.nan), ("2020-03-01", 2.0, None)], site="S0")
    res = pd.concat([other, series_results()], ignore_index=True)
    out, _ = raa(tmp_path, "dl", res)
    s1 = out[out["site_id"] == "S1"]
    # S1 at DL: 1: {4}; 2: {4,2} = 3; 3: {4,2,12} = 6; 4: {4,2,12,6} = 6; 5: {2,12,6,22} = 10.5; 6: {12,6,22,30} = 17.5
    assert s1["period_value_ug_L"].tolist() == pytest.approx([4.0, 3.0, 6.0, 6.0, 10.5, 17.5])
    s0 = out[out["site_id"] == "S0"].sort_values("sampled_at")
    # S0: 2019-01-10 is "<?" (no DL): its window has no value; 2020-03-01's window (2019-03-01, 2020-03-01] holds only 2.0
    assert np.isnan(s0["period_value_ug_L"].iloc[0]) and s0["period_value_ug_L"].iloc[1] == pytest.approx(2.0)


def test_results_listing_alike_in_blocks_of_any_size(tmp_path, monkeypatch):
    """The results behind each value read the same from string views into one text and from lists of
    descriptions joined block by block (the path of a missing description), whatever the block size,
    windows of a block boundary included (see SERIES: windows worked by hand above)."""
    _, whole = raa(tmp_path, "zero")
    from tracescreen.screening import period_results as pr

    monkeypatch.setattr(pr, "JOIN_WINDOWS", 2)
    monkeypatch.setattr(periods, "_joined", lambda rows, start, stop: pr.joined_lists(
        pr.describe(rows, pr.JOIN_SEPARATOR), np.asarray(start, np.int64), np.asarray(stop, np.int64)))
    _, blocks = raa(tmp_path, "zero")
    assert blocks["results"].tolist() == whole["results"].tolist()
    assert whole["results"].iloc[1] == "S1-0 (2020-01-15): 4.0; S1-1 (2020-04-15): <2.0"
