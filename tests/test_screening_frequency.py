"""Which series count as sampled once a year or less (tracescreen.screening.frequency).

Reference: 40 CFR 141.23(i)(2) (a system monitoring annually or less frequently: each result decides);
the threshold, a median interval of ANNUAL_INTERVAL_DAYS days or more between distinct sampling days,
is our choice (common practice); the medians below are worked by hand.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.screening.frequency import ANNUAL_INTERVAL_DAYS, infrequent_series


def _rows(series: dict[str, list[str]]) -> pd.DataFrame:
    rows = [(site, day) for site, days in series.items() for day in days]
    return pd.DataFrame({"limit_table": "t", "site_id": [s for s, _ in rows], "analyte": "arsenic",
                         "fraction": "total", "sampled_at": pd.to_datetime([d for _, d in rows])})


def test_median_interval_between_distinct_days_decides():
    assert ANNUAL_INTERVAL_DAYS == 300
    start = pd.Timestamp("2020-01-01")

    def days(gaps):
        return [str((start + pd.Timedelta(days=int(g))).date()) for g in np.cumsum([0, *gaps])]

    frame = _rows({
        "odd": days([100, 400, 500]),          # median of 100, 400, 500: 400 -> yearly or less
        "even_at": days([100, 200, 400, 500]),  # (200 + 400) / 2 = 300 -> yearly or less (at the threshold)
        "even_below": days([100, 200, 390, 500]),  # (200 + 390) / 2 = 295 -> more often
        "one_day": ["2021-05-05", "2021-05-05"],  # one distinct day: no interval -> each result decides
        "repeat": days([30, 0, 30]),            # distinct days 0, 30, 60: median 30 -> more often
    })
    frame.loc[len(frame) - 1, "sampled_at"] += pd.Timedelta(hours=9)  # a time of day: the same day
    got = infrequent_series(frame, np.arange(len(frame)))
    want = frame["site_id"].map({"odd": True, "even_at": True, "even_below": False, "one_day": True, "repeat": False})
    assert got.tolist() == want.tolist()
    # the series of the rows given (here two whole series, in any order): each row gets its series' answer
    pick = np.random.default_rng(3).permutation(np.flatnonzero(frame["site_id"].isin(["odd", "repeat"])))
    assert infrequent_series(frame, pick).tolist() == want.to_numpy()[pick].tolist()
