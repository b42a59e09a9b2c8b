"""Text columns as one code per row plus their distinct values: each distinct text is parsed once.

A lab file of 1,000,000 rows repeats a few hundred site ids, a few thousand dates and a handful of
units, analyte names and qualifiers. The loader turns every text column into a :class:`CodedText`
(codes into the column's distinct, whitespace-stripped values), runs the parsers of
:mod:`tracescreen.parsing`, :mod:`tracescreen.units` and :mod:`tracescreen.analytes` on the
distinct values only, and takes the answers back to the rows by integer indexing. Columns that are
parsed together (a result with its qualifier, detection limit, uncertainty and unit) are coded
jointly by :func:`joint_codes`, so each distinct combination is parsed once.

The parsers give the same answer for a value wherever it occurs, so this is exact, not an
approximation: the rows get exactly what parsing every row would give them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

_STR = "str"  # pandas' default string dtype (Arrow-backed)


@dataclass(frozen=True)
class CodedText:
    """A text column as ``codes`` (one per row, int32 or int64, never written to) into ``values``
    (distinct, stripped, unique)."""

    codes: np.ndarray
    values: pd.Index

    @classmethod
    def from_series(cls, s: pd.Series) -> CodedText:
        """Code a column of text (missing text counts as ""); surrounding whitespace is dropped.

        Text held by Arrow (a CSV file's cells) is coded by Arrow's dictionary encoding, which
        numbers values in order of first appearance as ``pandas.factorize`` does.
        """
        arrow = _arrow_text(s)
        if arrow is not None:
            if arrow.null_count:
                arrow = pc.fill_null(arrow, "")
            encoded = arrow.dictionary_encode().combine_chunks()
            codes = encoded.indices.to_numpy()  # int32, read-only: Arrow's own buffer (no 8 MB per 1M rows)
            values = pd.Index(pd.arrays.ArrowStringArray(encoded.dictionary), dtype=_STR)
        else:
            codes, uniq = pd.factorize(s.fillna("") if s.hasnans else s)
            values = pd.Index(uniq, dtype=_STR)
        stripped = values.str.strip()
        if not (stripped == values).all():  # " S01" and "S01" become one value
            recode, values = pd.factorize(stripped)
            codes = recode[codes]
            values = pd.Index(values, dtype=_STR)
        return cls(codes if codes.dtype == np.int32 else codes.astype(np.int64, copy=False), values)

    @classmethod
    def constant(cls, text: str, n: int) -> CodedText:
        """``n`` rows of the same text (a column the file does not have, or its mapped default)."""
        return cls(np.zeros(n, dtype=np.int64), pd.Index([str(text).strip()], dtype=_STR))

    def __len__(self) -> int:
        return len(self.codes)

    def series(self) -> pd.Series:
        """The distinct values as a Series (what the parsers are given)."""
        return pd.Series(self.values, dtype=_STR)

    def rows(self, per_value) -> np.ndarray:
        """A per-value answer (array aligned with ``values``) taken to the rows."""
        return np.asarray(per_value)[self.codes]

    def equals(self, text: str) -> np.ndarray:
        """Rows whose text is ``text`` (bool array)."""
        return self.rows(np.asarray(self.values == text, dtype=bool))

    def text_at(self, mask: np.ndarray) -> np.ndarray:
        """The texts of the rows in ``mask`` (object array), for messages."""
        return np.asarray(self.values.take(self.codes[mask]), dtype=object)

    def categorical(self, keep: np.ndarray | None = None) -> pd.Categorical:
        """The rows in ``keep`` as a categorical whose categories are every value, sorted."""
        return sorted_categorical(self.codes, self.values, keep)


def _arrow_text(s: pd.Series):
    """The Arrow array of a text Series held by Arrow (a ChunkedArray of strings), else None."""
    if len(s) == 0 or not isinstance(s.array, pd.arrays.ArrowStringArray):
        return None
    arrow = s.array.__arrow_array__()
    return arrow if pa.types.is_string(arrow.type) or pa.types.is_large_string(arrow.type) else None


def sorted_categorical(codes: np.ndarray, values, keep: np.ndarray | None = None) -> pd.Categorical:
    """Categorical of ``values[codes]`` (rows in ``keep``) with sorted str categories.

    ``values`` must be unique. Sorted categories make sorting and grouping by the column follow the
    text, as ``pandas.Categorical(texts)`` would.
    """
    values = pd.Index(values, dtype=_STR)
    order = values.argsort()
    rank = np.empty(len(order), dtype=np.int64)
    rank[order] = np.arange(len(order))
    c = rank[codes] if keep is None or keep.all() else rank[codes[keep]]
    return _from_unique(c, values[order])


def _from_unique(codes: np.ndarray, categories: pd.Index) -> pd.Categorical:
    """``pandas.Categorical.from_codes`` for categories known to be unique (a column's distinct values).
    pandas' own test of that makes a Python string of every category and hashes it (a million sample
    ids: 0.1-0.3 s); its constructor for known categories is used where this pandas has it."""
    known = getattr(pd.CategoricalDtype, "_from_fastpath", None)
    if known is None or len(categories) < 1000:
        return pd.Categorical.from_codes(codes, categories=categories)
    return pd.Categorical.from_codes(codes, dtype=known(categories, False))


def derived_categorical(per_value_text, codes: np.ndarray, keep: np.ndarray | None = None) -> pd.Categorical:
    """Categorical of a text derived per value (several values may give the same text).

    Categories are the texts of values some row has (``per_value_text`` may list more).
    """
    text = np.asarray(per_value_text, dtype=object)
    present = np.bincount(codes, minlength=len(text)) > 0
    dcodes, dvalues = pd.factorize(pd.Series(np.where(present, text, None), dtype=object))
    return sorted_categorical(dcodes[codes], pd.Index(dvalues, dtype=_STR), keep)


def kept_categorical(per_value_text, codes: np.ndarray, keep: np.ndarray | None = None) -> pd.Categorical:
    """``pandas.Categorical(per_value_text[codes][keep])`` worked out per value: the categories are the
    distinct texts of the kept rows, sorted (as that constructor sorts them), with no text per row."""
    text = np.asarray(per_value_text).astype(str)
    c = codes if keep is None else codes[keep]
    used = np.flatnonzero(np.bincount(c, minlength=len(text)))
    categories, where = np.unique(text[used], return_inverse=True)
    lookup = np.zeros(len(text), dtype=np.int64)
    lookup[used] = where.ravel()
    return pd.Categorical.from_codes(lookup[c], categories=pd.Index(categories, dtype=_STR))


def joint_codes(*codes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """One code per distinct combination of several code columns, and a first row of each.

    Returns
    -------
    (codes, first) : int64 arrays
        ``codes`` per row; ``first[k]`` is a row holding combination ``k``.
    """
    n = len(codes[0])
    joint = np.zeros(n, dtype=np.int64)
    width = 1
    for c in codes:
        k = int(c.max()) + 1 if n else 1
        if k == 1:  # one value (a column the file does not have): adds nothing
            continue
        if width * k >= 2**62:  # keep the mixed-radix number inside int64
            joint, uniq = pd.factorize(joint)
            width = len(uniq)
        joint = joint * k + c
        width *= k
    joint = pd.factorize(joint)[0].astype(np.int64, copy=False)
    # factorize numbers combinations in order of first appearance: a first row is where the
    # running maximum of the codes grows
    first = np.flatnonzero(np.diff(np.maximum.accumulate(joint), prepend=-1) > 0) if n else joint
    return joint, first


def nested_codes(outer: np.ndarray, inner: np.ndarray) -> tuple[np.ndarray, int]:
    """One code per distinct (outer, inner) pair of non-negative codes (e.g. site and sample), and a bound
    of the codes: ``inner`` itself where each inner code comes with one outer code (a sample taken at one
    site: no hash of the pairs), else :func:`joint_codes`."""
    if not len(inner):
        return np.zeros(0, dtype=np.int64), 0
    outer_of = np.zeros(int(inner.max()) + 1, dtype=np.int64)
    outer_of[inner] = outer
    if (outer_of[inner] == outer).all():
        return inner.astype(np.int64, copy=False), len(outer_of)
    joint, first = joint_codes(outer, inner)
    return joint, len(first)


def combo_text(columns: list, render) -> pd.Categorical:
    """Text per row from a few low-cardinality columns, rendered once per distinct combination."""
    n = len(columns[0])
    key = np.zeros(n, dtype=np.int64)
    cats = []
    for col in columns:
        codes, uniques = pd.factorize(np.asarray(col))
        key = key * max(len(uniques), 1) + codes
        cats.append(np.asarray(uniques, dtype=object))
    uniq, inv = np.unique(key, return_inverse=True)
    texts = []
    for k in uniq.tolist():  # distinct combinations, not rows
        parts = []
        for c in reversed(cats):
            k, i = divmod(k, max(len(c), 1))
            parts.append(c[i])
        texts.append(render(*reversed(parts)))
    categories, inv2 = np.unique(np.array(texts, dtype=object).astype(str), return_inverse=True)
    return pd.Categorical.from_codes(inv2[inv.ravel()], categories=categories)
