"""Revisions: which incoming lab results are new, unchanged, or revise stored ones.

A result is identified by ``RESULT_KEY``: site, sample, sampling date-time, analyte, fraction and
laboratory (a second laboratory's result for a split sample is another result, not a revision).
Its values are ``VALUE_COLUMNS``: the normalised value, detection flag and limit, qualifier,
sample type, parent sample, batch, analysis date, hardness and uncertainty. The reported text of
the result and unit is not compared (``0.50`` and ``0.5`` mg/L are the same value); it stays in
the stored original file.

Rows sharing a key (laboratory replicates in one report) are compared as a multiset: a key is
unchanged only if the incoming rows carry the same values, the same number of times, as the
current rows of that key; otherwise all incoming rows of that key revise all its current rows.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa

from tracescreen.io import loading
from tracescreen.io.results import INPUT_COLUMNS

RESULT_KEY = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab"]
PROVENANCE = ["file", "sheet", "row"]
VALUE_COLUMNS = [c for c in loading.ACCEPTED_COLUMNS
                 if c not in RESULT_KEY + PROVENANCE + ["result_text", "unit", "qualifier_meaning",
                                                         "quantitation_limit_ug_L"] + list(INPUT_COLUMNS)]


_MIX = np.uint64(0x100000001B3)           # 64-bit FNV prime, mixes the column hashes of a row
_NULL = "\x00null"                         # stands for a missing text cell in the hash


def _text_hash(values: np.ndarray) -> np.ndarray:
    return pd.util.hash_array(np.where(pd.isna(values), _NULL, values).astype(object))


def column_hash(col: pa.Array | pa.ChunkedArray) -> np.ndarray:
    """A 64-bit hash of each value of an Arrow column, the same whatever its storage.

    Text hashes the same whether dictionary-encoded (a categorical) or plain; a dictionary column
    is hashed through its dictionary and an integer take. Datetimes are taken at nanosecond
    resolution; NaN and -0.0 are normalised by ``pandas.util.hash_array`` (SipHash-2-4).
    """
    if isinstance(col, pa.ChunkedArray):
        col = col.combine_chunks() if col.num_chunks != 1 else col.chunk(0)
    t = col.type
    if pa.types.is_dictionary(t):
        words = _text_hash(col.dictionary.to_numpy(zero_copy_only=False))
        words = np.append(words, _text_hash(np.array([None], dtype=object)))
        return words[col.indices.fill_null(len(col.dictionary)).to_numpy().astype(np.intp)]
    if pa.types.is_string(t) or pa.types.is_large_string(t):
        return _text_hash(col.to_numpy(zero_copy_only=False))
    if pa.types.is_timestamp(t):
        return pd.util.hash_array(col.cast(pa.timestamp("ns")).to_numpy(zero_copy_only=False).view(np.int64))
    if pa.types.is_boolean(t):
        return pd.util.hash_array(col.fill_null(False).to_numpy(zero_copy_only=False).astype(np.uint8))
    return pd.util.hash_array(col.to_numpy(zero_copy_only=False).astype(np.float64))


def _combine(table: pa.Table, names: list[str]) -> np.ndarray:
    h = np.zeros(table.num_rows, dtype=np.uint64)
    for name in names:
        h = (h ^ column_hash(table.column(name))) * _MIX
    return h


def row_hashes(table: pa.Table | pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """64-bit hashes of each row's key (``RESULT_KEY``) and of its values (``VALUE_COLUMNS``)."""
    if isinstance(table, pd.DataFrame):
        table = pa.Table.from_pandas(table[RESULT_KEY + VALUE_COLUMNS], preserve_index=False)
    return _combine(table, RESULT_KEY), _combine(table, VALUE_COLUMNS)


def probe_hash() -> str:
    """Hashes of a fixed row: if a library update changed the hash, stored hashes are not used."""
    row = {c: ["probe \u00b5"] for c in RESULT_KEY + VALUE_COLUMNS}
    row.update(sampled_at=[pd.Timestamp("2001-02-03 04:05")], analysed_at=[pd.NaT],
               detected=[True], value_ug_L=[1.5], detection_limit_ug_L=[float("nan")],
               hardness_mg_L=[-0.0], uncertainty_ug_L=[0.25])
    k, v = row_hashes(pd.DataFrame(row))
    return f"{k[0]:016x}{v[0]:016x}"


def classify(inc: pd.DataFrame, current: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """Classify incoming rows against the current ones by key hash ``k`` and value hash ``v``.

    Returns the status of each incoming row (``new``, ``unchanged``, ``revised``) and the
    result ids of the current rows that the revised ones supersede. Rows sharing a key are
    compared as a multiset: a key is unchanged only if its incoming and current rows carry the
    same values the same number of times.
    """
    status = np.full(len(inc), "new", dtype=object)
    if len(current) == 0 or len(inc) == 0:
        return status, np.zeros(0, dtype=np.int64)
    known = np.isin(inc["k"].to_numpy(), current["k"].to_numpy())
    if not known.any():
        return status, np.zeros(0, dtype=np.int64)
    a = inc.loc[known, ["k", "v"]].copy()
    b = current.loc[current["k"].isin(a["k"].unique()), ["k", "v"]].copy()
    a["o"] = a.groupby(["k", "v"]).cumcount()
    b["o"] = b.groupby(["k", "v"]).cumcount()
    m = a.merge(b, on=["k", "v", "o"], how="outer", indicator=True)
    changed = m.loc[m["_merge"] != "both", "k"].unique()
    revised = known & np.isin(inc["k"].to_numpy(), changed)
    status[known] = "unchanged"
    status[revised] = "revised"
    sup = current.loc[current["k"].isin(changed), "result_id"].to_numpy(dtype=np.int64)
    return status, sup
