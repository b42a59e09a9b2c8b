"""A results dataset screened one site group at a time, and on a Dask LocalCluster of 2 workers.

Reference: the single-process run of the same dataset (the property under test is that the engine
changes nothing: rows sorted, screening exact, statistics within 1e-12; common practice for
distributed runs), and the single-process run of the lab files themselves (reading a dataset
instead of the files changes nothing either).
"""

from __future__ import annotations

from unittest import mock

import numpy as np
import pandas as pd
import pytest
from conftest import demo_args, demo_inputs

from tracescreen import pipeline, streaming
from tracescreen.cli import main
from tracescreen.io.dataset import dataset_parts, read_part, site_groups, write_dataset

SORTS = {
    "screening": ["file", "sheet", "row", "analyte", "fraction", "limit_table", "duration", "basis", "entry_id"],
    "screening_wide": ["file", "sheet", "row", "analyte", "fraction"],
    "summary": ["site_id", "analyte", "fraction"],
    "trends": ["site_id", "analyte", "fraction"],
    "exceedances": ["site_id", "analyte", "fraction", "limit_table", "duration", "basis"],
    "retest": ["site_id", "sampled_at", "sample_id", "analyte", "fraction", "reason", "detail"],
    "periods": ["limit_table", "site_id", "analyte", "fraction", "basis", "duration", "period", "period_end"],
}


@pytest.fixture(scope="module")
def demo_dataset(tmp_path_factory):
    """The demo's accepted results written as a dataset of several site groups (about 2,000 results each)."""
    data = pipeline.load(demo_inputs())
    dest = tmp_path_factory.mktemp("dataset") / "results"
    write_dataset(data.loaded.accepted, dest, group_rows=2000)
    return dest, data


def _read(path) -> pd.DataFrame:
    df = pd.read_parquet(path)
    for c in df.columns:
        if isinstance(df[c].dtype, pd.CategoricalDtype) or df[c].dtype == object:
            df[c] = df[c].astype(object).where(df[c].notna(), "").astype(str)
    return df


def _sorted(df: pd.DataFrame, keys) -> pd.DataFrame:
    keys = [k for k in keys if k in df.columns]
    return df.sort_values(keys, kind="stable").reset_index(drop=True)


def test_site_groups_hold_whole_sites(demo_dataset):
    """Every site's results lie in one site group folder, and the groups hold every result."""
    dest, data = demo_dataset
    parts = dataset_parts(dest)
    assert len(parts) > 1
    seen = {}
    total = 0
    for p in parts:
        acc, rej = read_part(p)
        total += len(acc)
        for s in acc["site_id"].astype(str).unique():
            assert s not in seen
            seen[s] = p.name
    assert total == len(data.loaded.accepted)
    # CRC-32 of the site id (zlib, ISO 3309 / ITU-T V.42 polynomial): b"S1" -> 0x...; stable across runs
    import zlib

    assert site_groups(pd.Series(["S1"]), 7)[0] == zlib.crc32(b"S1") % 7


def test_each_partition_file_holds_only_its_own_text(demo_dataset):
    """A partition file's text dictionaries hold the values of its own rows, not the whole run's (a
    categorical written as a dictionary carried every sample id into every file: 200,000 results made a
    450 MB dataset). Checked with pyarrow's own reading of each file."""
    import pyarrow.parquet as pq

    dest, _ = demo_dataset
    for f in sorted(dest.rglob("*.parquet")):
        table = pq.read_table(f)
        for name in ("sample_id", "site_id"):
            col = table.column(name)
            own = set(col.to_pylist())
            assert not hasattr(col.type, "value_type") or set(col.combine_chunks().dictionary.to_pylist()) <= own


def _dataset_args(dest) -> list[str]:
    """The demo's limit tables and sites with a dataset instead of its lab files."""
    args = demo_args()
    limits = [y for i, x in enumerate(args) if i and args[i - 1] == "--limits" for y in ("--limits", x)]
    return ["--dataset", str(dest), *limits, "--sites", args[args.index("--sites") + 1], "--format", "parquet"]


def test_dataset_run_equals_the_run_of_the_lab_files(demo_dataset, tmp_path):
    """`screen --dataset` gives the screening rows of `screen` on the lab files the dataset came from."""
    dest, _ = demo_dataset
    assert main(["screen", *demo_args(), "--out", str(tmp_path / "files"), "--format", "parquet"]) == 0
    assert main(["screen", *_dataset_args(dest), "--out", str(tmp_path / "ds")]) == 0
    a = _read(tmp_path / "files" / "screening.parquet")
    b = _read(tmp_path / "ds" / "screening.parquet")
    cols = [c for c in a.columns if c != "period_id"]
    pd.testing.assert_frame_equal(_sorted(a[cols], SORTS["screening"]), _sorted(b[cols], SORTS["screening"]),
                                  check_dtype=False)


@pytest.mark.slow
def test_dask_local_cluster_equals_single_process(demo_dataset, tmp_path):
    """--engine dask on a LocalCluster with 2 workers writes the tables of the single-process run of the same
    dataset: sorted, screening exact, statistics within 1e-12."""
    pytest.importorskip("distributed")
    dest, _ = demo_dataset
    common = _dataset_args(dest)
    assert main(["screen", *common, "--out", str(tmp_path / "one")]) == 0
    assert main(["screen", *common, "--engine", "dask", "--workers", "2", "--out", str(tmp_path / "dask")]) == 0
    for name, keys in SORTS.items():
        one = _sorted(_read(tmp_path / "one" / f"{name}.parquet"), keys)
        many = _sorted(_read(tmp_path / "dask" / name), keys)
        assert list(one.columns) == list(many.columns), name
        assert len(one) == len(many) > 0, name
        numeric = [c for c in one.columns if pd.api.types.is_float_dtype(one[c])]
        exact = [c for c in one.columns if c not in numeric]
        pd.testing.assert_frame_equal(one[exact], many[exact], check_dtype=False, obj=name)
        tol = 0.0 if name in ("screening", "screening_wide", "periods") else 1e-12
        np.testing.assert_allclose(many[numeric].to_numpy(float), one[numeric].to_numpy(float), rtol=tol, atol=0,
                                   equal_nan=True, err_msg=name)


def test_dataset_files_are_few_row_groups_and_whole_dataset_passes_read_file_by_file(demo_dataset, tmp_path):
    """Arrow's dataset writer cut one row group per input batch of about 32,000 rows and partition: a
    file of a 1,000,000-result write held 31 row groups of about 30 rows, and a reader of the whole
    dataset kept every file's footer (1.3 GB for 1,600 files). A file now has one row group up to 131,072
    rows (pyarrow's own metadata read back); the blanks read file by file equal a filter of every row."""
    import pyarrow.parquet as pq

    from tracescreen.io.dataset import count_rows, read_rows

    _, data = demo_dataset
    acc = data.loaded.accepted
    many = pd.concat([acc] * max(2, -(-100_000 // len(acc))), ignore_index=True)  # > 3 writer batches
    dest = tmp_path / "many"
    files = write_dataset(many, dest, group_rows=10**9)  # one site group: files by year
    for f in files:
        meta = pq.ParquetFile(f).metadata
        assert meta.num_row_groups == 1, (f, meta.num_row_groups, meta.num_rows)
    assert count_rows(dest) == len(many)
    blanks = read_rows(dest, "sample_type", ["field_blank", "lab_blank"])
    expected = many[many["sample_type"].astype(str).isin(["field_blank", "lab_blank"])]
    assert len(blanks) == len(expected) and len(expected) > 0
    assert sorted(blanks["sample_id"].astype(str)) == sorted(expected["sample_id"].astype(str))


def test_a_large_site_group_is_screened_in_parts_of_whole_sites(demo_dataset, tmp_path):
    """A dataset written as one site group (any writer may do so) is screened in parts of whole sites of
    about part_rows results, so that memory follows the part, not the group: the tables equal the run of
    the same group in one part (periods renumbered, so compared without their ids)."""
    import dataclasses

    from tracescreen.io.dataset import dataset_parts

    _, data = demo_dataset
    dest = tmp_path / "one_group"
    write_dataset(data.loaded.accepted, dest, group_rows=10**9)
    assert len(dataset_parts(dest)) == 1
    inputs = dataclasses.replace(demo_inputs(), results=(), reading=None, dataset=dest)
    whole = pipeline.run(inputs, pipeline.Options(part_rows=10**9, lab_qc=None))
    with mock.patch.object(streaming, "part_tables", wraps=streaming.part_tables) as spy:
        parts = pipeline.run(inputs, pipeline.Options(part_rows=1500, lab_qc=None))
    assert spy.call_count >= 3  # the one group was screened in parts
    assert max(len(c.args[0]) for c in spy.call_args_list) < len(data.loaded.accepted) / 2
    assert data.loaded.accepted["site_id"].nunique() > 3  # several parts of whole sites
    for attr, keys in (("screened", SORTS["screening"]), ("summary", SORTS["summary"]), ("trends", SORTS["trends"]),
                       ("retest", SORTS["retest"])):
        a, b = (getattr(r, attr).astype({c: object for c, t in getattr(r, attr).dtypes.items()
                                          if isinstance(t, pd.CategoricalDtype)}) for r in (whole, parts))
        cols = [c for c in a.columns if c != "period_id"]
        pd.testing.assert_frame_equal(_sorted(a[cols], keys), _sorted(b[cols], keys), check_dtype=False,
                                      check_column_type=False, obj=attr)
    assert len(parts.periods) == len(whole.periods) > 0
