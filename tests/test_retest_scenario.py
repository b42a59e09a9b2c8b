"""retest.csv from `tracescreen screen` on the demo scenario: every reason is found where the scenario scripts it."""

import pandas as pd
import pytest

from tracescreen.retest.listing import REASONS
from tracescreen.retest.rows import RETEST_COLUMNS


@pytest.fixture(scope="module")
def retest(demo_screen_dir):
    return pd.read_csv(demo_screen_dir / "retest.csv", dtype=str, keep_default_na=False)


def _hits(retest, reason, site=None, month=None, analyte=None):
    r = retest[retest["reason"].eq(reason)]
    if site:
        r = r[r["site_id"].eq(site)]
    if month:
        r = r[r["sampled_at"].str.startswith(month)]
    if analyte:
        r = r[r["analyte"].eq(analyte)]
    return r


def test_retest_csv_columns_and_every_reason(retest):
    """retest.csv has the documented columns in order and at least one row of each of the nine reasons (README.md#retest-list-retestcsv)."""
    assert list(retest.columns) == RETEST_COLUMNS
    assert set(REASONS) <= set(retest["reason"])
    assert (retest["detail"].str.len() > 0).all() and (retest["suggested_action"].str.len() > 0).all()


@pytest.mark.parametrize("reason, site, month, analyte", [
    ("history_outlier", "KR04", "2023-08", "copper"),           # scripted one-off copper spike (×7)
    ("uncertainty_straddles_limit", "BH01", "2024-05", "arsenic"),  # 10.4 ± 15 % against 10 µg/L
    ("dissolved_exceeds_total", "KR06", "2022-05", "copper"),   # scripted dissolved = 1.6 × total
    ("dl_too_high", "BH01", "2020-08", "arsenic"),              # DL 20 against 10 µg/L (WHO 2022)
    ("dl_too_high", "KR07", "2019-11", "cadmium"),              # DL 0.5 against the soft-water cadmium CCC
    ("holding_time_exceeded", None, "2021-05", "mercury"),      # 41 days > 28 days (40 CFR 136.3)
    ("holding_time_exceeded", "BH02", "2018-02", "arsenic"),    # 200 days > 6 months (40 CFR 136.3)
    ("blank_contamination", None, "2020-11", "zinc"),           # field blank at 12 µg/L zinc
    ("first_exceedance", "KR04", "2023-08", "copper"),
])
def test_scripted_events_are_flagged(retest, reason, site, month, analyte):
    """Each scripted event of scenario_data/make_scenario.py gives its retest reason."""
    assert len(_hits(retest, reason, site, month, analyte)) >= 1


def test_dl_too_high_names_the_detection_limit_needed(retest):
    """A DL of 20 µg/L against arsenic 10 µg/L (WHO GDWQ 2022 / EU 2020/2184): the detail asks for DL <= 10 µg/L."""
    row = _hits(retest, "dl_too_high", "BH01", "2020-08", "arsenic").iloc[0]
    assert row["detail"].endswith("detection limit needed: <= 10 µg/L")


def test_duplicate_pairs_flag_both_samples(retest):
    """Each disagreeing field duplicate pair lists both its samples (README.md#retest-list-retestcsv: both samples flagged)."""
    dup = _hits(retest, "duplicate_disagrees")
    per_pair = dup.groupby(["detail", "analyte", "fraction"])["sample_id"].nunique()
    assert len(per_pair) > 0 and (per_pair == 2).all()


def test_qc_samples_not_flagged_as_site_results(retest, demo_screen_dir):
    """Blanks and duplicates (status qc_sample) never get site-result reasons (exceedance, near limit, outlier, DL)."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv", dtype=str, keep_default_na=False)
    qc_ids = set(scr.loc[scr["status"].eq("qc_sample"), "sample_id"])
    site_reasons = {"first_exceedance", "near_limit", "history_outlier", "dl_too_high", "uncertainty_straddles_limit"}
    assert not set(retest.loc[retest["reason"].isin(site_reasons), "sample_id"]) & qc_ids
