"""Helpers of the retest rows (tracescreen.retest.rows): text as categoricals gives the same retest list
as plain text, whatever order the categories are in.

Check values: the order of text is Python's (code-point order of ``str``); the retest list of the plain
text table is the reference, the one the checks were written and tested against.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tracescreen._internal.frames import plain_text
from tracescreen.retest.listing import retest_list
from tracescreen.retest.rows import flagged_text, sort_as_text, text_rank


def _shuffled_categories(frame: pd.DataFrame, seed: int = 3) -> pd.DataFrame:
    """The same values with every categorical's categories in a random order (as after new categories
    are appended to a sorted set)."""
    rng = np.random.default_rng(seed)
    out = frame.copy()
    for c in out.columns:
        if isinstance(out[c].dtype, pd.CategoricalDtype):
            cats = out[c].cat.categories
            out[c] = out[c].cat.reorder_categories(cats[rng.permutation(len(cats))])
    return out


@pytest.mark.parametrize("categories", [["b", "", "a", "ab"], ["", "a", "ab", "b"], ["b", "a"]])
def test_text_rank_orders_as_plain_text(categories):
    """Missing text sorts as "" (the least text); categories in any order."""
    values = pd.Series(pd.Categorical(["ab", None, "b", "a", "", "b"], categories=categories)
                       if "" in categories else pd.Categorical(["a", None, "b", "a"], categories=categories))
    text = values.astype(object).where(values.notna(), "")
    rank = np.asarray(text_rank(values))
    for i in range(len(values)):
        for j in range(len(values)):
            assert (rank[i] < rank[j]) == (text[i] < text[j]) and (rank[i] == rank[j]) == (text[i] == text[j])


def test_sort_as_text_is_a_stable_sort_of_the_plain_text():
    frame = pd.DataFrame({"site_id": pd.Categorical(["S2", "S10", "S2", "S1"], categories=["S2", "S10", "S1"]),
                          "n": [1, 2, 3, 4]})
    assert sort_as_text(frame, ["site_id"])["n"].tolist() == [4, 2, 1, 3]  # "S1" < "S10" < "S2", ties kept


def test_flagged_text_equals_plain_text():
    frame = pd.DataFrame({"a": pd.Categorical(["x", None, "y"]), "b": [1.0, 2.0, 3.0], "c": ["p", "q", None]})
    pd.testing.assert_frame_equal(flagged_text(frame.iloc[[2, 0]]), plain_text(frame.iloc[[2, 0]]))


def test_retest_list_the_same_on_categorical_and_plain_text(demo_results):
    """The demo scenario's screening table (text as categoricals, as the pipeline makes it), its plain
    text copy and a copy with shuffled categories give the same retest rows."""
    screened = demo_results.screened
    assert any(isinstance(t, pd.CategoricalDtype) for t in screened.dtypes)
    reference = retest_list(plain_text(screened))
    assert len(reference) > 100
    pd.testing.assert_frame_equal(retest_list(screened), reference)
    pd.testing.assert_frame_equal(retest_list(_shuffled_categories(screened)), reference)


def test_result_ids_equal_exactly_for_equal_keys():
    """One integer per (file, sheet, row): equal keys give equal ids, different keys different ones,
    whatever the dtypes (categorical, text with missing values, integers; a negative row is factorised)."""
    from tracescreen.retest.rows import result_ids

    frame = pd.DataFrame({"file": pd.Categorical(["a.csv", "a.csv", "b.csv", "a.csv", "b.csv"]),
                          "sheet": ["", None, "", "", ""], "row": [2, 2, 2, 3, 2]})
    for rows in ([2, 2, 2, 3, 2], [2, 2, 2, -3, 2]):
        ids = result_ids(frame.assign(row=rows))
        keys = list(zip(frame["file"], frame["sheet"].fillna("NA"), rows))
        for i in range(len(frame)):
            for j in range(len(frame)):
                assert (ids[i] == ids[j]) == (keys[i] == keys[j])
    assert result_ids(frame.drop(columns=["file", "sheet", "row"])) is None


@pytest.mark.parametrize("seed", range(30))
def test_first_of_each_equals_pandas_duplicated(seed):
    """first_of_each (runs of equal ids, checked to be distinct) marks the same rows as
    ~pandas.Series.duplicated (the reference), for ids in runs, shuffled, and runs that come back."""
    from tracescreen.retest.rows import first_of_each

    rng = np.random.default_rng(seed)
    n = int(rng.integers(0, 40))
    ids = np.repeat(rng.permutation(n), rng.integers(1, 4, n))  # runs, distinct, not rising
    if seed % 3 == 1:
        ids = rng.integers(0, 8, len(ids))  # ids that come back after other ids
    elif seed % 3 == 2:
        ids = np.sort(ids)
    np.testing.assert_array_equal(first_of_each(ids), ~pd.Series(ids, dtype="int64").duplicated().to_numpy())


@pytest.mark.parametrize("texts", [["a", "b", "c"], ["a", "a", "b"], ["b", "a"], ["A", "a", "é", "z"], ["z", "é"],
                                   ["", "x"], ["x"], []])
def test_text_order_check_by_arrow_equals_pandas(texts):
    """The categories' text-order test by Arrow's byte compare equals pandas' (Python str order:
    code points) is_monotonic_increasing and is_unique."""
    from tracescreen.retest.rows import _strictly_ascending

    cats = pd.Index(texts, dtype="str")
    assert _strictly_ascending(cats) == (cats.is_monotonic_increasing and cats.is_unique)
