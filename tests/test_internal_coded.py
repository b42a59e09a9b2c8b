"""Coded text columns: the loader's parse-each-distinct-value-once machinery, checked against pandas."""

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from tracescreen._internal.coded import CodedText, derived_categorical, joint_codes, nested_codes, sorted_categorical

TEXTS = st.lists(st.sampled_from(["a", " a", "a ", "b", "", "  ", "B", "µg/L", "ug/L", "<0.5"]), min_size=1, max_size=60)


@given(TEXTS)
@settings(max_examples=100, deadline=None)
def test_codes_give_back_every_row_stripped(texts):
    """values[codes] is each row's text with surrounding whitespace dropped (Python str.strip), values unique."""
    c = CodedText.from_series(pd.Series(texts, dtype="str"))
    assert list(c.values.take(c.codes)) == [t.strip() for t in texts]
    assert c.values.is_unique


@given(TEXTS, st.data())
@settings(max_examples=100, deadline=None)
def test_categorical_equals_pandas_categorical(texts, data):
    """Rows kept as a categorical equal pandas.Categorical of the stripped texts (sorted categories), then filtered."""
    keep = np.array(data.draw(st.lists(st.booleans(), min_size=len(texts), max_size=len(texts))))
    c = CodedText.from_series(pd.Series(texts, dtype="str"))
    expected = pd.Categorical([t.strip() for t in texts])[keep]
    got = c.categorical(keep)
    assert list(got.categories) == list(expected.categories)
    assert list(got) == list(expected)


def test_derived_categorical_lists_only_texts_some_row_has():
    """Categories of a per-value mapping are the mapped texts of values present in the rows, sorted."""
    got = derived_categorical(np.array(["", "total", "dissolved"], dtype=object), np.array([1, 1, 2, 1]))
    assert list(got.categories) == ["dissolved", "total"]
    assert list(got) == ["total", "total", "dissolved", "total"]


@given(st.lists(st.tuples(st.integers(0, 3), st.integers(0, 2), st.integers(0, 5)), min_size=1, max_size=80))
@settings(max_examples=100, deadline=None)
def test_joint_codes_match_pandas_grouping(rows):
    """One code per distinct combination, numbered in order of first appearance (as pandas groupby ngroup with sort=False)."""
    a = np.array(rows, dtype=np.int64)
    codes, first = joint_codes(a[:, 0], a[:, 1], a[:, 2])
    ref = pd.DataFrame(a).groupby([0, 1, 2], sort=False).ngroup().to_numpy()
    assert np.array_equal(codes, ref)
    assert np.array_equal(a[first], pd.DataFrame(a).drop_duplicates().to_numpy())


@given(st.lists(st.tuples(st.integers(0, 3), st.integers(0, 6)), min_size=1, max_size=80), st.booleans())
@settings(max_examples=100, deadline=None)
def test_nested_codes_give_the_groups_of_pandas_grouping(rows, one_site_per_sample):
    """Two rows share a nested code exactly when pandas groupby puts them in one (site, sample) group,
    with the sample's own code or without (a sample id at two sites); codes stay below the bound."""
    a = np.array(rows, dtype=np.int64)
    if one_site_per_sample:
        a[:, 0] = a[:, 1] % 3
    codes, bound = nested_codes(a[:, 0], a[:, 1])
    ref = pd.DataFrame(a).groupby([0, 1], sort=False).ngroup().to_numpy()
    assert (codes[:, None] == codes[None, :]).tolist() == (ref[:, None] == ref[None, :]).tolist()
    assert codes.min() >= 0 and codes.max() < bound


def test_joint_codes_stay_exact_with_wide_code_ranges():
    """Columns whose code ranges multiply past int64 are re-coded, not overflowed."""
    n = 1000
    big = np.arange(n, dtype=np.int64) * 3_000_000  # max code 3e9: three such columns exceed 2**62
    codes, first = joint_codes(big, big[::-1].copy(), big)
    assert len(np.unique(codes)) == n and np.array_equal(first, np.arange(n))


def test_sorted_categorical_orders_by_code_point():
    """Category order is by Unicode code point, as Python sorts str (common practice for text sort)."""
    cat = sorted_categorical(np.array([0, 1, 2, 0]), ["b", "B", "µ"])
    assert list(cat.categories) == sorted(["b", "B", "µ"])


@given(TEXTS, st.lists(st.booleans(), min_size=60, max_size=60))
@settings(max_examples=100, deadline=None)
def test_kept_categorical_equals_pandas_categorical_of_the_kept_rows(texts, keep):
    """kept_categorical worked out per value equals pandas.Categorical of the kept rows' texts (the reference):
    same codes, same categories (sorted, only texts of kept rows)."""
    from tracescreen._internal.coded import kept_categorical

    c = CodedText.from_series(pd.Series(texts, dtype="str"))
    per_value = np.asarray(c.values, dtype=object)
    mask = np.array(keep[:len(texts)])
    got = kept_categorical(per_value, c.codes, mask)
    ref = pd.Categorical(per_value[c.codes][mask].astype(str))
    assert list(got.categories) == list(ref.categories) and got.categories.dtype == ref.categories.dtype
    np.testing.assert_array_equal(got.codes, ref.codes)


@given(st.lists(st.sampled_from(["a", "b", "", "c", None, "a "]), min_size=1, max_size=40), st.integers(1, 39))
@settings(max_examples=100, deadline=None)
def test_arrow_text_is_coded_as_pandas_factorize_codes_it(texts, cut):
    """Text held by Arrow in several chunks (a CSV file read block by block) is coded by Arrow's dictionary
    encoding: the codes and values are pandas.factorize's of the text with missing as "" (first appearance)."""
    import pyarrow as pa

    cut = min(cut, len(texts))
    s = pd.Series(pd.arrays.ArrowStringArray(pa.chunked_array([texts[:cut], texts[cut:]], type=pa.string())))
    codes, values = pd.factorize(pd.Series([("" if t is None else t).strip() for t in texts], dtype=object))
    c = CodedText.from_series(s)
    assert list(c.codes) == list(codes)
    assert list(c.values) == list(values)
