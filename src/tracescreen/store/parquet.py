"""Export the workspace's current results as a Parquet dataset partitioned by sampling year.

The dataset uses Hive-style partition folders (``year=2021/part-0.parquet``), which pyarrow,
DuckDB, Spark, R arrow and others read as a ``year`` column. Each row keeps its provenance
(file, sheet, row, import id, the file's SHA-256, import time). The dataset is written into a
temporary folder beside ``dest`` and renamed into place, so ``dest`` is either complete or absent.

References
----------
[Parquet]_ (docs/references.md)
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import pyarrow as pa
import pyarrow.dataset as ds

from tracescreen.caution import CAUTION
from tracescreen.store.workspace import Workspace, WorkspaceError


def export_parquet(ws: Workspace, dest: str | Path, history: bool = False) -> list[Path]:
    """Write the current results (or, with ``history``, every stored version) under ``dest``.

    Parameters
    ----------
    ws : Workspace
    dest : path
        A folder that does not exist yet, or is empty.
    history : bool
        Include superseded results (column ``superseded_by`` gives the import that replaced them).

    Returns
    -------
    list of Path
        The Parquet files written.
    """
    dest = Path(dest)
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        raise WorkspaceError(f"{dest}: exists and is not an empty folder; choose a new one")
    df = ws.results_history()
    if not history:
        df = df[df["superseded_by"].isna()].drop(columns=["superseded_by"])
    df["year"] = df["sampled_at"].dt.year.astype("int32")
    table = pa.Table.from_pandas(df, preserve_index=False)
    table = table.replace_schema_metadata({**(table.schema.metadata or {}),
                                           b"tracescreen.caution": CAUTION.encode(),
                                           b"tracescreen.store.workspace": str(ws.path.resolve()).encode()})
    dest.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{dest.name}.", dir=dest.parent))
    try:
        ds.write_dataset(table, tmp, format="parquet", basename_template="part-{i}.parquet",
                         partitioning=ds.partitioning(pa.schema([("year", pa.int32())]), flavor="hive"),
                         existing_data_behavior="error")
        if dest.exists():
            dest.rmdir()
        os.replace(tmp, dest)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return sorted(dest.rglob("*.parquet"))
