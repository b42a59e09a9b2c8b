"""A workspace written before the water-chemistry input columns existed still reads: its stored results
get ph, doc_mg_L and temperature_C as NaN (not known), the other columns unchanged (common practice:
additive schema change, older files filled on read)."""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pyarrow.ipc as ipc

from tracescreen.io.results import INPUT_COLUMNS
from tracescreen.store.blobs import _STORED
from tracescreen.store.workspace import _decode_stored


def test_stored_results_without_input_columns_read_as_unknown():
    old_fields = [f for f in _STORED if f.name not in INPUT_COLUMNS]
    arrays = []
    for f in old_fields:
        if pa.types.is_dictionary(f.type):
            arrays.append(pa.array(["x", "y"]).dictionary_encode().cast(f.type))
        elif pa.types.is_timestamp(f.type):
            arrays.append(pa.array([0, 86_400_000_000_000], type=f.type))
        elif pa.types.is_boolean(f.type):
            arrays.append(pa.array([True, False]))
        else:
            arrays.append(pa.array([1, 2]).cast(f.type))
    table = pa.Table.from_arrays(arrays, schema=pa.schema(old_fields))
    sink = pa.BufferOutputStream()
    with ipc.new_file(sink, table.schema) as w:
        w.write_table(table)
    got = _decode_stored(sink.getvalue().to_pybytes(), [f.name for f in _STORED])
    assert got.schema.names == _STORED.names
    for c in INPUT_COLUMNS:
        assert np.isnan(got.column(c).to_numpy(zero_copy_only=False)).all()
    assert got.column("value_ug_L").to_pylist() == [1.0, 2.0]
