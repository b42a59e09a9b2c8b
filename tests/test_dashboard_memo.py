"""The dashboard's per-session memo stays within its bounds, and engine frames keep the engine's text convention."""

import numpy as np
import pandas as pd

from dashboard.state.frames import engine_frame, plain_frame
from dashboard.state.memo import Memo, approx_nbytes


def test_memo_keeps_at_most_entries_per_name_least_recent_out():
    """With 3 entries per name, the 4th value evicts the least recently used one of that name only (LRU, common practice)."""
    memo = Memo(entries=3, max_bytes=10**9)
    calls = []

    def value(k):
        calls.append(k)
        return k

    for k in range(3):
        memo.get("view", (k,), lambda k=k: value(k))
    memo.get("other", (0,), lambda: value("other"))
    memo.get("view", (0,), lambda: value("again"))  # a hit: (0,) becomes the most recent
    memo.get("view", (3,), lambda: value(3))
    assert ("view", (1,)) not in memo.keys()
    assert {("view", (0,)), ("view", (2,)), ("view", (3,)), ("other", (0,))} == set(memo.keys())
    assert calls == [0, 1, 2, "other", 3]


def test_memo_bytes_stay_under_the_cap_and_oversized_values_are_not_kept():
    """Values of 1 MB each under a 3.5 MB cap: never more than 3 kept; a 5 MB value is returned, not kept (arithmetic)."""
    memo = Memo(entries=100, max_bytes=3_500_000)
    for k in range(10):
        memo.get("chart", (k,), lambda: np.zeros(125_000))  # 1,000,000 bytes
        assert memo.nbytes <= memo.max_bytes
    assert len(memo) == 3
    assert [k[1][0] for k in memo.keys()] == [7, 8, 9]
    big = memo.get("chart", ("big",), lambda: np.zeros(625_000))
    assert big.nbytes == 5_000_000 and ("chart", ("big",)) not in memo.keys()
    assert len(memo) == 3


def test_memo_size_estimate_counts_array_and_text_buffers():
    """The estimate is at least the arrays' buffers and the strings' lengths (numpy nbytes; arithmetic)."""
    fig = {"data": [{"x": np.zeros(1000), "customdata": [["a" * 100] * 9] * 50}], "layout": {"title": "t"}}
    assert approx_nbytes(fig) >= 8000 + 50 * 9 * 100


def test_memo_counts_a_categorical_slice_by_its_codes_not_the_shared_categories():
    """A 10-row slice of a categorical with 100,000 categories counts 10 code bytes, not the categories (numpy nbytes)."""
    cats = pd.Index([f"L{i}" for i in range(100_000)], dtype=object)
    col = pd.Series(pd.Categorical.from_codes(np.arange(100_000), categories=cats))
    frame = pd.DataFrame({"sample_id": col, "value": np.zeros(100_000)}).iloc[:10]
    assert approx_nbytes(frame) < 1_000


def test_engine_frame_gives_empty_text_for_missing_and_keeps_categoricals():
    """Missing text becomes "" as in the engine's tables (DEVELOPERS.md data model); values and dtype otherwise unchanged."""
    cat = pd.Categorical(["a", None, "b", None], categories=pd.Index(["a", "b"], dtype=object))
    frame = pd.DataFrame({"t": cat, "v": [1.0, 2.0, np.nan, 4.0]}, index=[10, 11, 12, 13])
    out = engine_frame(frame)
    assert isinstance(out["t"].dtype, pd.CategoricalDtype)
    assert list(out["t"].astype(str)) == ["a", "", "b", ""]
    assert list(out.index) == [10, 11, 12, 13]
    pd.testing.assert_series_equal(out["v"], frame["v"])
    assert list(plain_frame(frame)["t"]) == list(out["t"].astype(str))


def test_store_keeps_upload_sessions_within_bytes_but_always_the_latest(tmp_path):
    """With a 1-byte budget only the most recently used upload session stays screened; with room, up to cache_size stay (LRU)."""
    from dashboard_support import scenario_inputs

    from dashboard.state.store import DataStore

    header = "site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
    tight = DataStore(scenario_inputs(), upload_dir=tmp_path, cache_bytes=1)
    roomy = DataStore(scenario_inputs(), upload_dir=tmp_path, cache_size=2)
    tokens = [tight.save_upload(f"u{i}.csv", (header + f"KR01,UP-{i},2025-11-0{i + 1},zinc,total,1{i},ug/L\n").encode(),
                                None) for i in range(3)]
    for store in (tight, roomy):
        for t in tokens:
            store.get(f"base+{t}")
    assert list(tight._cache) == [f"base+{tokens[2]}"]
    assert list(roomy._cache) == [f"base+{tokens[1]}", f"base+{tokens[2]}"]
