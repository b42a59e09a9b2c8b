"""Sorting by a group and a value within it (tracescreen._internal.sorting).

Reference: numpy's own ``np.lexsort`` (the reference library's order: by the last key, then the one
before, ties in input order) and ``np.unique(..., return_inverse=True)`` for dense ranks.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tracescreen._internal import sorting
from tracescreen._internal.sorting import dense_ranks, group_sort


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 6), st.sampled_from([0.0, -0.0, 1.5, -2.0, 1e300, np.inf, -np.inf, np.nan,
                                                              2000.25, 2000.25 + 1e-12])),
                max_size=60))
def test_group_sort_is_lexsorts_order(cells):
    """Groups, then values, ties (equal values, -0.0 and 0.0, NaNs) in input order: np.lexsort's order."""
    group = np.array([g for g, _ in cells], dtype=np.int64)
    x = np.array([v for _, v in cells], dtype=float)
    assert group_sort(group, x).tolist() == np.lexsort((x, group)).tolist()


@pytest.mark.parametrize("seed", [0, 1])
def test_group_sort_of_many_tied_dates(seed):
    """A part's worth of rows (decimal-year dates, many series, many ties): lexsort's order exactly."""
    rng = np.random.default_rng(seed)
    group = rng.integers(0, 2400, 130_000)
    x = 2000 + rng.integers(0, 9000, group.size) / 365.25
    assert np.array_equal(group_sort(group, x), np.lexsort((x, group)))


def test_keys_too_wide_for_one_integer_fall_back_to_lexsort(monkeypatch):
    """When group x ranks x rows would not fit one int64 key, numpy's lexsort gives the order."""
    monkeypatch.setattr(sorting, "_KEY_LIMIT", 10)
    group, x = np.array([3, 1, 3, 1]), np.array([0.5, 0.5, -1.0, 0.25])
    assert group_sort(group, x).tolist() == np.lexsort((x, group)).tolist() == [3, 1, 2, 0]


def test_dense_ranks_are_numpys_unique_inverse():
    """Dense ranks equal np.unique's inverse (equal values one rank); NaNs share the last rank."""
    x = np.array([3.0, 1.0, 3.0, np.nan, -0.0, 0.0, np.nan])
    ranks, k = dense_ranks(x)
    assert ranks.tolist() == [2, 1, 2, 3, 0, 0, 3] and k == 4
    y = np.random.default_rng(2).integers(0, 50, 1000)
    assert dense_ranks(y)[0].tolist() == np.unique(y, return_inverse=True)[1].tolist()
