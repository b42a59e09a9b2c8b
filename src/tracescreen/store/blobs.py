"""How a workspace stores one lab file's results: an Arrow IPC file (LZ4-compressed buffers) with one
dictionary per text column, so loading back needs no dictionary unification and decodes straight
into the results DataFrame."""

from __future__ import annotations

import pandas as pd
import pyarrow as pa
import pyarrow.feather as feather
import pyarrow.ipc as ipc

from tracescreen.io import loading

_IPC = ipc.IpcWriteOptions(compression="lz4")

_TEXT = pa.dictionary(pa.int32(), pa.large_string())
_STORED = pa.schema(
    [(c, _TEXT if c in loading.TEXT_COLUMNS else
      pa.int64() if c == "row" else pa.timestamp("ns") if c in ("sampled_at", "analysed_at") else
      pa.bool_() if c == "detected" else pa.float64()) for c in loading.ACCEPTED_COLUMNS]
    + [("result_id", pa.int64()), ("key_hash", pa.uint64()), ("value_hash", pa.uint64())])


def _encode(table: pa.Table) -> bytes:
    """A file's stored results: the stored columns and types, one Arrow IPC record batch (one
    dictionary per text column, so that loading back needs no dictionary unification)."""
    table = table.select(_STORED.names).cast(_STORED).combine_chunks()
    sink = pa.BufferOutputStream()
    with ipc.new_file(sink, table.schema, options=_IPC) as writer:
        writer.write_table(table)
    return sink.getvalue().to_pybytes()


def _to_frame(table: pa.Table) -> pd.DataFrame:
    """Arrow results -> DataFrame; text columns become categoricals with sorted categories."""
    df = table.to_pandas(split_blocks=True)
    for c in df.columns.intersection(loading.TEXT_COLUMNS):
        cats = df[c].cat.categories
        if not cats.is_monotonic_increasing:
            df[c] = df[c].cat.reorder_categories(cats.sort_values())
    return df


def _decode(data: bytes, columns: list[str] | None = None) -> pa.Table:
    return feather.read_table(pa.BufferReader(data), columns=columns)


