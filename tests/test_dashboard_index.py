"""The session's precomputed indexes select exactly the rows a plain pandas filter of the engine's screening selects."""

import numpy as np
import pandas as pd
import pytest
from dashboard_support import scenario_inputs

from dashboard.state.frames import plain_frame
from dashboard.state.session import NO_DAY, build_session
from dashboard.views.matrix import Filters, row_mask


@pytest.fixture(scope="module")
def session():
    return build_session(scenario_inputs())


def test_series_slice_equals_plain_filter(session):
    """For every site, metal and fraction, the binary-search slice is the boolean filter's rows, in date order."""
    scr = session.screened
    text = {c: scr[c].astype(object).where(scr[c].notna(), "") for c in ("site_id", "analyte", "fraction")}
    groups = pd.DataFrame(text).drop_duplicates().itertuples(index=False)
    n = 0
    for site, analyte, fraction in groups:
        plain = scr.index[(text["site_id"] == site) & (text["analyte"] == analyte) & (text["fraction"] == fraction)]
        sliced = session.series(site, analyte, fraction)
        assert list(sliced.index) == list(plain), (site, analyte, fraction)
        assert sliced["sampled_at"].is_monotonic_increasing
        n += len(sliced)
    assert n == len(scr)
    assert session.series("no such site", "arsenic", "total").empty


def test_row_mask_equals_plain_filter_on_text_columns(session):
    """Use, table, fraction, date and campaign filters select the same rows as pandas comparisons of the text columns."""
    scr = session.screened
    pick = scr[(scr["sample_type"] == "sample") & scr["limit_table"].notna()]
    r = pick.iloc[len(pick) // 2]
    use, table, fraction, campaign = str(r["use"]), str(r["limit_table"]), str(r["fraction"]), str(r["campaign"])
    start = str((r["sampled_at"] - pd.Timedelta(days=40)).date())
    end = str((r["sampled_at"] + pd.Timedelta(days=40)).date())
    f = Filters(uses=(use,), tables=(table,), fraction=fraction, start=start, end=end, campaigns=(campaign,))
    plain = ((scr["sample_type"] == "sample") & (scr["use"] == use) & (scr["limit_table"] == table)
             & (scr["fraction"] == fraction) & (scr["sampled_at"] >= pd.Timestamp(start))
             & (scr["sampled_at"] < pd.Timestamp(end) + pd.Timedelta(days=1)) & (scr["campaign"] == campaign)
             & scr["status"].notna())
    np.testing.assert_array_equal(row_mask(session, f), plain.to_numpy(dtype=bool))
    assert plain.sum() > 0


def test_undated_result_has_no_day_and_only_date_filters_drop_it():
    """A result without a sampling date gets NO_DAY; a start date filters it out, no filter keeps it."""
    inputs = scenario_inputs()
    acc = inputs.accepted
    first = acc.index[acc["sample_type"] == "sample"][0]
    acc = acc.copy()
    acc.loc[first, "sampled_at"] = pd.NaT
    s = build_session(type(inputs)(**{**inputs.__dict__, "accepted": acc}))
    undated = s.day == NO_DAY
    assert undated.any() and (s.rid[undated] == s.rid[undated][0]).all()
    assert row_mask(s, Filters())[undated].all()
    assert not row_mask(s, Filters(start="1900-01-01"))[undated].any()


def test_screening_in_parts_equals_screening_at_once():
    """Screening the scenario in parts of whole sites gives the same rows as one engine call; period ids
    group the same rows (the engine's own screen is the reference)."""
    inputs = scenario_inputs()
    whole = build_session(inputs).screened
    parts = build_session(inputs, part_rows=700).screened
    assert len(whole) == len(parts)
    cols = [c for c in whole.columns if c != "period_id"]
    pd.testing.assert_frame_equal(plain_frame(whole[cols]), plain_frame(parts[cols]))
    a, b = whole["period_id"], parts["period_id"]
    assert (a.isna() == b.isna()).all() and a.notna().any()
    pairs = pd.DataFrame({"a": a, "b": b}).dropna().drop_duplicates()
    assert pairs["a"].is_unique and pairs["b"].is_unique  # one-to-one
