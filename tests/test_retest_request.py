"""The retest request: one line per laboratory, batch and sample; reanalysis apart from resampling;
a sample past its holding time on the request date is resampled (US EPA, 40 CFR 136.3 Table II:
metals 6 months, mercury 28 days)."""

from __future__ import annotations

import pandas as pd

from tracescreen.retest.request import REASON_WORDS, REQUEST_COLUMNS, request_id, request_lines
from tracescreen.retest.rows import RETEST_COLUMNS


def _retest(rows):
    return pd.DataFrame(rows, columns=RETEST_COLUMNS).assign(sampled_at=lambda d: pd.to_datetime(d["sampled_at"]))


def test_one_line_per_sample_with_its_metals_and_reasons_in_words():
    r = _retest([
        ["S1", "A1", "2024-01-10", "arsenic", "total", "Lab X", "B1", "dl_too_high", "d1", "a"],
        ["S1", "A1", "2024-01-10", "lead", "total", "Lab X", "B1", "above_range", "d2", "a"],
        ["S1", "A1", "2024-01-10", "lead", "total", "Lab X", "B1", "history_outlier", "d3", "a"],
        ["S2", "A2", "2024-01-11", "zinc", "dissolved", "Lab X", "B2", "first_exceedance", "d4", "a"],
    ])
    lines = request_lines(r, as_of="2024-02-01")
    assert list(lines.columns) == REQUEST_COLUMNS and len(lines) == 2
    s1 = lines[lines["sample_id"] == "A1"].iloc[0]
    assert s1["analytes"] == "arsenic; lead" and s1["reason_codes"] == "dl_too_high;above_range;history_outlier"
    assert s1["reasons"].split("; ")[0] == REASON_WORDS["dl_too_high"]
    assert s1["action"] == "reanalyse" and s1["lab"] == "Lab X" and s1["batch"] == "B1"
    # a first exceedance is confirmed with a new sample (common practice)
    assert lines[lines["sample_id"] == "A2"].iloc[0]["action"] == "resample"
    assert s1["request_id"] == request_id("Lab X", "B1", "S1", "A1", pd.Timestamp("2024-01-10"))


def test_past_holding_time_turns_a_reanalysis_into_a_resample():
    # metals hold 6 months from sampling (40 CFR 136.3 Table II): sampled 2024-01-10, the holding time ends 2024-07-10
    r = _retest([["S1", "A1", "2024-01-10", "arsenic", "total", "Lab X", "B1", "dl_too_high", "d", "a"]])
    before = request_lines(r, as_of="2024-07-09").iloc[0]
    after = request_lines(r, as_of="2024-07-11").iloc[0]
    assert pd.Timestamp(before["holding_time_ends"]) == pd.Timestamp("2024-07-10")
    assert before["action"] == "reanalyse" and after["action"] == "resample"
    assert "past its holding time" in after["why_action"]
    # mercury holds 28 days (40 CFR 136.3 Table II)
    hg = _retest([["S1", "A1", "2024-01-10", "mercury", "total", "Lab X", "B1", "dl_too_high", "d", "a"]])
    assert request_lines(hg, as_of="2024-02-08").iloc[0]["action"] == "resample"
    assert request_lines(hg, as_of="2024-02-06").iloc[0]["action"] == "reanalyse"


def test_a_missing_qc_summary_asks_for_documents_and_empty_list_gives_no_lines():
    r = _retest([["S1", "A1", "2024-01-10", "arsenic", "total", "Lab X", "B1", "qc_summary_missing", "d", "a"]])
    assert request_lines(r, as_of="2024-01-20").iloc[0]["action"] == "documents"
    assert request_lines(r.iloc[0:0]).empty
