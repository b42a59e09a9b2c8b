"""Server-side grid rows: AG Grid's filter and sort models applied on the server give the rows pandas
selects with the same comparison (pandas is the reference), on the demo's exceedance rows."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from dashboard_support import scenario_inputs

from dashboard.render.grid import STATUS_DISPLAY
from dashboard.state.frames import plain_frame
from dashboard.views.grid_query import FilterError, GridQuery, block_records, filter_mask, query_rows, sort_order
from dashboard.views.tables import exceedance_rows
from tracescreen import vocabulary


@pytest.fixture(scope="module")
def rows():
    from dashboard.state.session import build_session

    return exceedance_rows(build_session(scenario_inputs()))


def _num(kind, value, to=None):
    return {"filterType": "number", "type": kind, "filter": value, "filterTo": to}


def test_number_filters_equal_pandas_comparisons(rows):
    ratio = rows["ratio"].astype(float)
    cases = [("greaterThan", 2, ratio > 2), ("greaterThanOrEqual", 2, ratio >= 2), ("lessThan", 1.5, ratio < 1.5),
             ("lessThanOrEqual", 1.5, ratio <= 1.5), ("equals", 2, ratio == 2), ("notEqual", 2, ratio != 2)]
    for kind, value, want in cases:
        got = filter_mask(rows, {"ratio": _num(kind, value)})
        np.testing.assert_array_equal(got, want.to_numpy(), err_msg=kind)
    got = filter_mask(rows, {"ratio": _num("inRange", 3, 1.5)})  # either order, both ends included
    np.testing.assert_array_equal(got, ratio.between(1.5, 3).to_numpy())
    assert 0 < (ratio > 2).sum() < len(rows)


def test_blank_and_two_conditions(rows):
    value = rows["value_ug_L"].astype(float)
    np.testing.assert_array_equal(filter_mask(rows, {"value_ug_L": {"filterType": "number", "type": "blank"}}),
                                  value.isna().to_numpy())
    both = {"filterType": "number", "operator": "OR", "conditions": [_num("lessThan", 1.2), _num("greaterThan", 3)]}
    ratio = rows["ratio"].astype(float)
    np.testing.assert_array_equal(filter_mask(rows, {"ratio": both}), ((ratio < 1.2) | (ratio > 3)).to_numpy())


def test_date_filters_compare_calendar_days(rows):
    day = rows["sampled_at"].dt.normalize()
    model = {"filterType": "date", "type": "lessThan", "dateFrom": "2020-01-01 00:00:00", "dateTo": None}
    np.testing.assert_array_equal(filter_mask(rows, {"sampled_at": model}), (day < "2020-01-01").to_numpy())
    model = {"filterType": "date", "type": "inRange", "dateFrom": "2021-01-01 00:00:00", "dateTo": "2021-12-31 00:00:00"}
    np.testing.assert_array_equal(filter_mask(rows, {"sampled_at": model}), (day.dt.year == 2021).to_numpy())


def test_text_filters_case_insensitive_and_status_words_on_screen(rows):
    site = rows["site_id"].astype(str)
    got = filter_mask(rows, {"site_id": {"filterType": "text", "type": "contains", "filter": "kr0"}})
    np.testing.assert_array_equal(got, site.str.contains("KR0").to_numpy())
    # the status column shows the vocabulary's words: filtering by them (or by the code) works
    status = rows["status"].astype(str)
    for text in (vocabulary.LABEL["exceeds"], "exceeds"):
        got = filter_mask(rows, {"status": {"filterType": "text", "type": "startsWith", "filter": text}},
                          displays={"status": STATUS_DISPLAY})
        np.testing.assert_array_equal(got, (status == "exceeds").to_numpy())


def test_unknown_column_and_unreadable_value_are_errors_in_words(rows):
    with pytest.raises(FilterError, match="no column 'Nonsense'"):
        filter_mask(rows, {"nonsense": _num("equals", 1)}, headings={"nonsense": "Nonsense"})
    with pytest.raises(FilterError, match="Ratio needs a number"):
        filter_mask(rows, {"ratio": _num("greaterThan", "lots")}, headings={"ratio": "Ratio"})


def test_sort_model_orders_like_pandas(rows):
    order = sort_order(rows, [{"colId": "site_id", "sort": "asc"}, {"colId": "ratio", "sort": "desc"}])
    got = plain_frame(rows.iloc[order])[["site_id", "ratio"]].reset_index(drop=True)
    want = plain_frame(rows).sort_values(["site_id", "ratio"], ascending=[True, False], kind="stable",
                                         na_position="last")[["site_id", "ratio"]].reset_index(drop=True)
    pd.testing.assert_frame_equal(got, want)


def test_query_rows_and_records(rows):
    q = GridQuery.from_models({"ratio": _num("greaterThan", 2)}, [{"colId": "ratio", "sort": "asc"}])
    got = query_rows(rows, q)
    assert got["ratio"].is_monotonic_increasing and (got["ratio"] > 2).all()
    assert GridQuery.from_models({"ratio": _num("greaterThan", 2)}, None) == GridQuery(q.filter_json, "[]")
    records = block_records(got.head(3), ["site_id", "sampled_at", "ratio", "status"], {"status": STATUS_DISPLAY})
    assert records[0]["status"] == vocabulary.LABEL[records[0]["status_code"]]
    assert len(records[0]["sampled_at"]) == 10 and isinstance(records[0]["ratio"], float)


def test_a_missing_date_does_not_give_whole_days_a_time_of_day():
    """A date column of whole days with a blank (a trend that never reaches its limit) shows days; a NaT's
    hour is NaN, which compared unequal to 0 and put ' 00:00' after every date of the Trends page
    (ISO 8601 calendar dates; common practice: no time where none was measured)."""
    days = pd.Series(pd.to_datetime(["2029-10-25", None, "2058-04-14"]))
    records = block_records(pd.DataFrame({"crosses_limit_on": days}), ["crosses_limit_on"])
    assert records[0]["crosses_limit_on"] == "2029-10-25" and records[1]["crosses_limit_on"] == ""
    timed = pd.Series(pd.to_datetime(["2024-05-01 09:30", None]))
    assert block_records(pd.DataFrame({"t": timed}), ["t"])[0]["t"] == "2024-05-01 09:30"
