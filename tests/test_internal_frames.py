"""frames.replace_at on categorical text columns: same values as plain assignment (pandas semantics)."""

import numpy as np
import pandas as pd

from tracescreen._internal.frames import replace_at


def test_replace_at_categorical_with_text_equals_plain_assignment():
    """Putting text (new, repeated, None, numbers) into a categorical column gives the values plain object assignment gives, as str()."""
    col = pd.Series(pd.Categorical(["meets", "exceeds", "meets", "no_limit", "meets"]))
    values = np.array(["exceeds", "a longer note " * 20, None, 1], dtype=object)
    out = replace_at(col, [0, 2, 3, 4], values)
    plain = col.astype(object).to_numpy(copy=True)
    plain[[0, 2, 3, 4]] = [str(v) for v in values]
    assert isinstance(out, pd.Categorical)
    assert list(np.asarray(out, dtype=object)) == list(plain)
    assert set(out.categories) >= set(plain) and out.categories.is_unique


def test_str_array_is_the_array_pandas_makes():
    """str_array (built by Arrow) gives what pd.array(values, dtype="str") gives: text kept, missing
    values missing, other values as their str (common practice: pandas' own conversion is the reference)."""
    from tracescreen._internal.frames import str_array

    cases = [np.array(["a", "b", None, np.nan, 1, "a"], dtype=object), ["x", "y; z"], ["x", None, "z"], [1, "a"],
             np.array([], dtype=object), np.array(["µg/L", "=1"], dtype=object),
             np.array(["a", None, np.nan, "b", "a"], dtype=object)]
    for v in cases:
        got, want = str_array(v), pd.array(np.asarray(v, dtype=object) if isinstance(v, np.ndarray) else v, dtype="str")
        assert got.dtype == want.dtype
        assert pd.Series(got).equals(pd.Series(want))
    assert list(str_array("q", 3)) == ["q", "q", "q"]
    assert str_array("q", 0).dtype == pd.array([], dtype="str").dtype and len(str_array("q", 0)) == 0


def test_used_only_keeps_the_used_categories_in_order():
    """The categories a column's rows use, in their order, as pandas' remove_unused_categories gives them;
    the column itself (no copy) when it uses every category."""
    from tracescreen._internal.frames import used_only

    col = pd.Series(pd.Categorical(["Zn", None, "Cd", "Zn"], categories=["Cd", "Cu", "Pb", "Zn"]))
    got = used_only(col)
    assert list(got.cat.categories) == ["Cd", "Zn"] and got.cat.codes.tolist() == [1, -1, 0, 1]
    pd.testing.assert_series_equal(got, col.cat.remove_unused_categories())
    whole = pd.Series(pd.Categorical(["a", "b", "a"]))
    assert used_only(whole) is whole
    rng = np.random.default_rng(3)  # many rows, some categories unused, ordered; and far more categories than rows
    for n_cats, n_rows, ordered in ((40, 5000, True), (5000, 10, False)):
        codes = rng.integers(-1, n_cats // 2, n_rows)
        col = pd.Series(pd.Categorical.from_codes(codes, categories=[f"c{k}" for k in range(n_cats)], ordered=ordered),
                        index=np.arange(n_rows) * 2, name="note")
        pd.testing.assert_series_equal(used_only(col), col.cat.remove_unused_categories())


def test_concat_arrays_is_what_pandas_concat_gives():
    """concat_arrays (numpy, codes, Arrow chunks) gives the values and dtype of pandas.concat of the pieces as
    Series (the reference): numbers, dates, categoricals of one dtype, of other categories or of one set in
    another order, str arrays with categoricals of str, and object text."""
    from tracescreen._internal.frames import concat_arrays, str_array

    cat = pd.Categorical(["a", "b", None, "a"])
    cases = [
        [np.arange(3), np.arange(2)],
        [np.array(["2020-01-01", "NaT"], dtype="datetime64[ns]"), np.array(["2021-05-01"], dtype="datetime64[ns]")],
        [cat, pd.Categorical(["b", None], dtype=cat.dtype)],
        [cat, pd.Categorical(["b", "a"], categories=["b", "a"])],
        [cat, pd.Categorical(["c", "d"])],
        [str_array(np.array(["x", None], dtype=object)), pd.Categorical(["total", "total"]), str_array("y", 2)],
        [np.array(["x", None], dtype=object), np.array([1.5, 2.0])],
    ]
    for pieces in cases:
        got = pd.Series(concat_arrays(pieces))
        want = pd.concat([pd.Series(p) for p in pieces], ignore_index=True)
        pd.testing.assert_series_equal(got, want)
