"""Export the workspace's current results as a Parquet dataset partitioned by site group and sampling year.

The dataset uses Hive-style partition folders (``site_group=3/year=2021/part-0.parquet``; a site
group holds whole sites, :mod:`tracescreen.io.dataset`), which pyarrow,
DuckDB, Spark, R arrow and others read as a ``year`` column. Each row keeps its provenance
(file, sheet, row, import id, the file's SHA-256, import time). The dataset is written into a
temporary folder beside ``dest`` and renamed into place, so ``dest`` is either complete or absent.

References
----------
[Parquet]_ (docs/references.md)
"""

from __future__ import annotations

from pathlib import Path

from tracescreen.io.dataset import write_dataset
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
    return write_dataset(df, dest, {"tracescreen.store.workspace": str(ws.path.resolve())})

