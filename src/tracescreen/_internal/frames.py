"""Helpers for the engine's tables.

The accepted-results and screening tables hold their text columns as pandas categoricals of str:
a screening of 1,000,000 results against several tables repeats the same few site ids, analyte
names and citations millions of times, and categoricals keep that small and fast. Code that builds
text from those columns (string concatenation, ``.str`` methods on the values) can first take a
copy with :func:`plain_text`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa


def used_only(col: pd.Series) -> pd.Series:
    """A categorical column reduced to the categories its rows use, in their order; ``col`` itself when
    it uses them all (one histogram of the codes decides: no hashing). A part taken from a run keeps the
    run's categories, e.g. a million sample ids for a part of 125,000 results."""
    codes = col.cat.codes.to_numpy()
    cats = col.cat.categories
    n = len(cats)
    if n > 4 * len(codes) + 1024:  # far more categories than rows: pandas' recoding of the codes it sees
        return col.cat.remove_unused_categories()
    used = np.bincount(codes[codes >= 0] if (codes < 0).any() else codes, minlength=n) > 0
    if used.all():
        return col
    # as remove_unused_categories, by the histogram: the used categories in their order, codes renumbered
    new = (np.cumsum(used) - 1).astype(codes.dtype)
    out = pd.Categorical.from_codes(np.where(codes >= 0, new[np.maximum(codes, 0)], -1).astype(codes.dtype),
                                    dtype=pd.CategoricalDtype(cats[used], ordered=col.cat.ordered), validate=False)
    return pd.Series(out, index=col.index, name=col.name, copy=False)


def plain_text(df: pd.DataFrame, columns=None) -> pd.DataFrame:
    """Copy of ``df`` whose categorical text columns are plain text (object dtype, shared strings).

    Decoding is by category codes: each distinct string is shared, not copied per row.
    """
    out = df.copy()
    for c in columns if columns is not None else out.columns:
        if c in out and isinstance(out[c].dtype, pd.CategoricalDtype):
            cats = np.asarray(out[c].cat.categories.astype(object), dtype=object)
            codes = out[c].cat.codes.to_numpy()
            vals = np.empty(len(codes), dtype=object)
            ok = codes >= 0
            vals[ok] = cats[codes[ok]]
            vals[~ok] = ""
            out[c] = pd.Series(vals, index=out.index, dtype=object)
    return out


def _as_text_categorical(values) -> pd.Categorical:
    """Values as a categorical of their text, ``str(v)`` per distinct value.

    Factorised first, so only the distinct values are turned into text: converting millions of
    notes with ``ndarray.astype(str)`` would build a fixed-width unicode array as wide as the
    longest note (gigabytes for a million rows).
    """
    arr = np.asarray(values, dtype=object)
    missing = pd.isna(arr)
    if missing.any():  # None and NaN keep their own text, as str() gives it
        arr = arr.copy()
        arr[missing] = [str(v) for v in arr[missing]]
    codes, uniques = pd.factorize(arr)
    text = pd.Index([str(u) for u in uniques], dtype=object)
    if not text.is_unique:  # distinct values with the same text (1 and "1"): merge them
        merged, text = pd.factorize(text)
        codes = merged[codes]
        text = pd.Index(text, dtype=object)
    return pd.Categorical.from_codes(codes, categories=text.astype(str))


def replace_at(col: pd.Series, positions: np.ndarray, values):
    """Values of ``col`` with ``values`` put at ``positions``, ready to assign as a column.

    A categorical column stays categorical (its categories are extended by new values); a text
    column stays text; a numeric column comes back as a numpy array.
    """
    positions = np.asarray(positions, dtype=np.int64)
    if isinstance(col.dtype, pd.CategoricalDtype):
        if not isinstance(values, pd.Categorical):
            values = _as_text_categorical(values)
        cats = col.cat.categories
        new = pd.Index(values.categories.astype(str))
        categories = cats.append(new.difference(cats))
        codes = col.cat.codes.to_numpy().astype(np.int64)  # room for new categories
        codes[positions] = categories.get_indexer(new)[values.codes]  # recode via the categories only
        return pd.Categorical.from_codes(codes, categories=categories, ordered=col.cat.ordered)
    if isinstance(col.dtype, pd.Int64Dtype):
        arr = col.array.copy()
        arr[positions] = np.asarray(values, dtype=np.int64)
        return arr
    if pd.api.types.is_string_dtype(col.dtype) or col.dtype == object:
        arr = col.to_numpy(dtype=object, copy=True)
        arr[positions] = np.asarray(values, dtype=object)
        return pd.array(arr, dtype=col.dtype)
    arr = col.to_numpy(copy=True)
    arr[positions] = values
    return arr


def take_column(col: pd.Series, positions: np.ndarray):
    """Values of ``col`` at ``positions``; text columns come back as categoricals (fast integer take)."""
    if isinstance(col.dtype, pd.CategoricalDtype):  # codes of a categorical are valid as they are
        return pd.Categorical.from_codes(col.cat.codes.to_numpy()[positions], dtype=col.dtype, validate=False)
    if pd.api.types.is_string_dtype(col.dtype) or col.dtype == object:
        codes, uniques = pd.factorize(col.fillna(""), use_na_sentinel=False)  # missing text is ""
        return pd.Categorical.from_codes(codes[positions], categories=pd.Index(uniques, dtype=object).astype(str))
    return col.to_numpy()[positions]


def entry_attribute(values: pd.Series, e_pos: np.ndarray) -> pd.Categorical:
    """Attribute of the entry at each position (-1: no entry -> empty text), as a categorical."""
    text = values.astype(str).to_numpy(dtype=object)
    cats, inv = np.unique(np.append(text, ""), return_inverse=True)
    inv = inv.ravel().astype(np.int8 if len(cats) < 128 else np.int16 if len(cats) < 32768 else np.int32)
    codes = inv[np.where(e_pos < 0, len(text), e_pos)]  # codes of np.unique: valid as they are
    return pd.Categorical.from_codes(codes, dtype=pd.CategoricalDtype(pd.Index(cats.astype(str))), validate=False)


def str_array(values, n: int | None = None):
    """Text as pandas' ``str`` array: the array ``pd.array(values, dtype="str")`` gives, built by Arrow.

    ``values``: an object array (coded first, so a column repeating a few texts is turned into text
    once per distinct value), a list of str (copied by Arrow in one call), or one str repeated ``n``
    times. Missing values stay missing; any other value becomes ``str(value)``.
    """
    if isinstance(values, str):  # one text, taken n times by Arrow
        return pd.array(pa.array([values], type=pa.large_string()).take(pa.array(np.zeros(n, dtype=np.int32))),
                        dtype="str")
    if isinstance(values, list):
        try:
            return pd.array(pa.array(values, type=pa.large_string(), from_pandas=True), dtype="str")
        except (pa.ArrowInvalid, pa.ArrowTypeError):  # not all str: each value's text, as pandas makes it
            return pd.array(np.asarray(values, dtype=object), dtype="str")
    codes, uniq = pd.factorize(np.asarray(values, dtype=object))
    text = pa.array([u if isinstance(u, str) else str(u) for u in uniq], type=pa.large_string())
    coded = pa.DictionaryArray.from_arrays(pa.array(codes.astype(np.int32), mask=codes < 0), text)
    return pd.array(coded.cast(pa.large_string()), dtype="str")


def concat_arrays(pieces: list):
    """Pieces of a column one after the other, as ``pandas.concat`` of them as Series gives them (values
    and dtype), without its per-frame work: numpy arrays of one dtype joined, categoricals of one dtype by
    their codes, ``str`` arrays and categoricals of ``str`` (which pandas joins as ``str``) as Arrow
    chunks (no text copied); anything else by pandas."""
    first = pieces[0]
    if all(isinstance(p, np.ndarray) and p.dtype == first.dtype and p.dtype != object for p in pieces):
        return np.concatenate(pieces)
    if all(isinstance(p, pd.Categorical) and p.dtype == first.dtype for p in pieces):
        # (unordered dtypes are equal whatever the order of their categories: codes put in the first's order)
        codes = [p.codes if p.categories.equals(first.categories) else
                 np.where(p.codes < 0, -1, first.categories.get_indexer(p.categories)[p.codes]) for p in pieces]
        return pd.Categorical.from_codes(np.concatenate(codes), dtype=first.dtype, validate=False)

    def is_str(p) -> bool:  # a str array, or a categorical of str (pandas joins categoricals of other categories as str)
        return p.categories.dtype == "str" if isinstance(p, pd.Categorical) else \
            isinstance(p, pd.api.extensions.ExtensionArray) and p.dtype == "str"

    if all(is_str(p) for p in pieces):  # as Arrow chunks, texts not copied
        chunks = []
        for p in pieces:
            p = decoded(p) if isinstance(p, pd.Categorical) else p
            chunks += pa.chunked_array(pa.array(p)).cast(pa.large_string()).chunks
        return pd.array(pa.chunked_array(chunks, type=pa.large_string()), dtype="str")
    return pd.concat([pd.Series(p) for p in pieces], ignore_index=True).array


def decoded(values: pd.Categorical):
    """A categorical of text as pandas' ``str`` array, decoded by Arrow from its categories (missing stays missing)."""
    codes = values.codes
    text = pa.array(values.categories.to_numpy(dtype=object), type=pa.large_string(), from_pandas=True)
    return pd.array(pa.DictionaryArray.from_arrays(pa.array(codes.astype(np.int32), mask=codes < 0), text)
                    .cast(pa.large_string()), dtype="str")
