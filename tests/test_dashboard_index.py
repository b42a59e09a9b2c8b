"""The session's precomputed indexes select exactly the rows a plain pandas filter of the engine's screening selects."""

import numpy as np
import pandas as pd
import pytest
from dashboard_support import scenario_inputs

from dashboard.data import NO_DAY, build_session, plain_frame
from dashboard.matrix import Filters, row_mask


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


def test_site_parts_cover_all_rows_and_never_split_a_site():
    """Part ranges are contiguous, cover every row, and each site's rows fall in one part (arithmetic)."""
    from dashboard.screen_parts import site_parts

    codes = np.repeat(np.arange(9), [5, 1, 30, 2, 2, 2, 11, 1, 6])
    for part_rows in (1, 3, 7, 20, 100):
        ranges = site_parts(codes, part_rows)
        assert ranges[0][0] == 0 and ranges[-1][1] == len(codes)
        assert all(a[1] == b[0] for a, b in zip(ranges, ranges[1:]))
        part_of = np.concatenate([np.full(hi - lo, i) for i, (lo, hi) in enumerate(ranges)])
        assert all(len(set(part_of[codes == c])) == 1 for c in range(9))


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


def test_join_frames_equals_concat_and_keeps_text_categorical():
    """Joining frames with differently categorised text gives pandas.concat's values, text as one categorical."""
    from dashboard.screen_parts import join_frames

    a = pd.DataFrame({"site_id": pd.Categorical(["S2", "S1"]), "v": [1.0, 2.0], "lab": ["x", None]})
    b = pd.DataFrame({"site_id": pd.Categorical(["S3", "S2", None]), "v": [3.0, np.nan, 5.0]})
    out = join_frames([a.copy(), b.copy()])
    ref = pd.concat([a.astype({"site_id": object}), b.astype({"site_id": object})], ignore_index=True)
    assert isinstance(out["site_id"].dtype, pd.CategoricalDtype) and isinstance(out["lab"].dtype, pd.CategoricalDtype)
    assert out["site_id"].astype(object).where(out["site_id"].notna(), None).tolist() == \
        ref["site_id"].where(ref["site_id"].notna(), None).tolist()
    np.testing.assert_array_equal(out["v"].to_numpy(), ref["v"].to_numpy())
    assert out["lab"].iloc[0] == "x" and out["lab"].iloc[1:].isna().all()
