"""Accepted results as a Parquet dataset partitioned by site group and year, read one site group at a time.

``tracescreen export --parquet DIR`` writes a workspace's current results as Hive-style folders
``DIR/site_group=K/year=Y/part-0.parquet`` (Apache Arrow datasets, [Parquet]_): every site's results
lie in one site group (a stable hash of the site id, :func:`site_groups`; CRC-32 [ISO3309]_), so a site group is a
partition of whole sites that screening, the series statistics and the retest flags can take on
their own -- in one process one after the other (:mod:`tracescreen.streaming`), or on the workers of
a Dask cluster (:mod:`tracescreen.distributed`). The columns are the accepted-results contract
(DEVELOPERS.md) plus provenance; text columns are dictionary-encoded.

References
----------
[Parquet]_, [ISO3309]_ (docs/references.md)
"""

from __future__ import annotations

import zlib
from pathlib import Path
from typing import Iterator

import numpy as np
import pandas as pd

from tracescreen.io.results import ACCEPTED_COLUMNS, TEXT_COLUMNS

#: Partition column holding a site's group.
SITE_GROUP = "site_group"

#: Results per site group aimed at when a dataset is written (a group holds whole sites).
GROUP_ROWS = 250_000


class DatasetError(ValueError):
    """A results dataset that cannot be read (the message names the folder and the problem)."""


#: Rows per Parquet row group of a dataset file: Arrow's dataset writer otherwise cuts a row group per
#: input batch and partition (31 groups of about 30 rows in a file of 957), and every row group's
#: statistics weigh on each reader's memory.
ROW_GROUPS = {"min_rows_per_group": 1 << 17, "max_rows_per_group": 1 << 20}


def site_groups(site_id: pd.Series, n_groups: int) -> np.ndarray:
    """Site group of each result: CRC-32 of the site id (UTF-8) modulo ``n_groups``, the same on every
    machine and run (one CRC per distinct site).

    >>> site_groups(pd.Series(["S001", "S002", "S001"]), 4).tolist()
    [1, 3, 1]
    """
    codes, uniques = pd.factorize(site_id.astype(str))
    per_site = np.array([zlib.crc32(s.encode("utf-8")) % n_groups for s in uniques], dtype=np.int32)
    return per_site[codes] if len(uniques) else np.zeros(len(codes), np.int32)


def group_count(n_results: int, group_rows: int = GROUP_ROWS) -> int:
    """How many site groups a dataset of ``n_results`` gets (about ``group_rows`` results each)."""
    return max(1, -(-int(n_results) // group_rows))


def dataset_parts(path) -> list[Path]:
    """The site-group folders of a results dataset, in group order.

    Raises
    ------
    DatasetError
        No such folder, or no Parquet files in it.
    """
    root = Path(path)
    if not root.is_dir():
        raise DatasetError(f"{root}: no such folder (give the folder written by 'tracescreen export --parquet')")
    parts = sorted((p for p in root.iterdir() if p.is_dir() and p.name.startswith(f"{SITE_GROUP}=")),
                   key=lambda p: int(p.name.split("=", 1)[1]) if p.name.split("=", 1)[1].isdigit() else -1)
    if parts:
        return parts
    if not any(root.rglob("*.parquet")):
        raise DatasetError(f"{root}: no Parquet files here (give the folder written by 'tracescreen export --parquet')")
    return [root]  # not partitioned by site: the whole dataset is one part


def group_of(part) -> int:
    """The site group number of a part folder (``site_group=K``; 0 for a dataset not partitioned by site)."""
    key, _, value = Path(part).name.partition("=")
    return int(value) if key == SITE_GROUP and value.isdigit() else 0


def _accepted(table) -> pd.DataFrame:
    """Arrow results -> the accepted contract: text as categoricals of str, dates in ns."""
    df = table.to_pandas()
    missing = [c for c in ACCEPTED_COLUMNS if c not in df.columns]
    if missing:
        raise DatasetError(f"the dataset lacks the column(s) {', '.join(missing)} of accepted results")
    out = {}
    for c in ACCEPTED_COLUMNS:
        s = df[c]
        if c in TEXT_COLUMNS:
            s = s.astype(object).where(s.notna(), "").astype(str).astype("category")
        elif c in ("sampled_at", "analysed_at"):
            s = s.astype("datetime64[ns]")
        out[c] = s.reset_index(drop=True)
    return pd.DataFrame(out, copy=False)


def read_part(part, sites: pd.DataFrame | None = None, sites_name: str = "the sites file"):
    """The accepted results of one site group, and the rows of sites not in ``sites`` (rejected).

    Returns
    -------
    (accepted, rejected) : DataFrame, DataFrame
    """
    import pyarrow.dataset as ds

    table = ds.dataset(Path(part), format="parquet", partitioning="hive").to_table()
    acc = _accepted(table)
    rejected = pd.DataFrame(columns=["file", "sheet", "row", "reason"])
    if sites is not None:
        unknown = ~acc["site_id"].isin(sites["site_id"]).to_numpy()
        if unknown.any():
            rejected = acc.loc[unknown, ["file", "sheet", "row", "site_id", "sample_id", "sampled_at", "analyte",
                                         "fraction", "result_text", "unit"]].astype(str)
            rejected.insert(3, "reason", "site '" + rejected["site_id"] + f"' is not in {sites_name}")
            acc = acc[~unknown].reset_index(drop=True)
    return acc, rejected.reset_index(drop=True)


def files_of(path) -> list[Path]:
    """The Parquet files of a dataset, in path order."""
    return sorted(Path(path).rglob("*.parquet"))


def scan(path, columns: list[str] | None = None, filters=None) -> Iterator:
    """Each Parquet file of a dataset as an Arrow table, one file at a time (``pyarrow.parquet.read_table``
    with ``columns`` and ``filters`` pushed down). A whole-dataset pass never holds every file's footer at
    once, as a ``pyarrow.dataset`` scan of the whole dataset does (each fragment keeps its metadata: about
    0.75 MB for a file of 31 row groups; 1.3 GB for a 2.4-million-result dataset of 1,600 files)."""
    import pyarrow.parquet as pq

    for f in files_of(path):
        yield pq.read_table(f, columns=columns, filters=filters, partitioning=None)


def read_rows(path, column: str, values) -> pd.DataFrame:
    """The results of the whole dataset whose ``column`` is one of ``values`` (e.g. every blank), read
    file by file with the filter pushed down to the Parquet files (:func:`scan`)."""
    import pyarrow as pa

    tables = list(scan(path, filters=[(column, "in", list(values))]))
    return _accepted(pa.concat_tables(tables, promote_options="permissive"))


def count_rows(path) -> int:
    """Results in the dataset (from the Parquet footers, read one file at a time; no rows read)."""
    import pyarrow.parquet as pq

    return sum(pq.ParquetFile(f).metadata.num_rows for f in files_of(path))


def dataset_files(path):
    """The load outcome of a dataset before its parts are read (:class:`tracescreen.io.results.LoadResult`):
    no accepted rows yet (they are read part by part), one line per Parquet file with its rows and SHA-256."""
    import pyarrow.parquet as pq

    from tracescreen._internal.hashing import file_sha256
    from tracescreen.io.results import LoadResult, empty_accepted

    dataset_parts(path)  # checks the folder
    files = files_of(path)
    rows = [{"file": str(f.relative_to(path)), "path": str(f), "sheet": "", "sha256": file_sha256(f),
             "rows_read": pq.ParquetFile(f).metadata.num_rows, "blank_rows": 0} for f in files]
    table = pd.DataFrame(rows, columns=["file", "path", "sheet", "sha256", "rows_read", "blank_rows"])
    n = int(table["rows_read"].sum())
    return LoadResult(empty_accepted(), pd.DataFrame(columns=["file", "sheet", "row", "reason"]), table,
                      [f"dataset {path}: {n:,} results in {len(files)} Parquet files, read one site group at a time"])


def arrow_table(df: pd.DataFrame):
    """``df`` as an Arrow table for a partitioned dataset, categorical text as plain text: a dictionary
    column would carry the whole run's dictionary (every sample id) into every partition file; each
    file dictionary-encodes its own values when written."""
    import pyarrow as pa

    table = pa.Table.from_pandas(df, preserve_index=False)
    return table.cast(pa.schema([pa.field(f.name, f.type.value_type) if pa.types.is_dictionary(f.type) else f
                                 for f in table.schema], metadata=table.schema.metadata))


def write_dataset(results: pd.DataFrame, dest, metadata: dict | None = None, group_rows: int = GROUP_ROWS) -> list[Path]:
    """Write accepted results (plus any provenance columns) as a dataset partitioned by site group and year.

    The dataset is written into a temporary folder beside ``dest`` and renamed into place, so ``dest``
    is either complete or absent. Returns the Parquet files written.
    """
    import os
    import shutil
    import tempfile

    import pyarrow as pa
    import pyarrow.dataset as ds

    from tracescreen.caution import CAUTION

    dest = Path(dest)
    df = results.assign(**{SITE_GROUP: site_groups(results["site_id"], group_count(len(results), group_rows)),
                           "year": results["sampled_at"].dt.year.astype("int32")})
    table = arrow_table(df)
    meta = {b"tracescreen.caution": CAUTION.encode()}
    meta.update({k.encode(): str(v).encode() for k, v in (metadata or {}).items()})
    table = table.replace_schema_metadata({**(table.schema.metadata or {}), **meta})
    dest.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{dest.name}.", dir=dest.parent))
    try:
        ds.write_dataset(table, tmp, format="parquet", basename_template="part-{i}.parquet",
                         partitioning=ds.partitioning(pa.schema([(SITE_GROUP, pa.int32()), ("year", pa.int32())]),
                                                      flavor="hive"),
                         existing_data_behavior="error", **ROW_GROUPS)
        if dest.exists():
            dest.rmdir()
        os.replace(tmp, dest)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return sorted(dest.rglob("*.parquet"))
