"""A run in partitions of whole sites (tracescreen.streaming) and the output formats (report.streams, screening.wide).

References: the engine's own run in one part is the reference for the partitioned run (the property under
test is that partitioning changes nothing but memory; common practice for chunked processing); the
file formats are checked by reading the files back with pandas/pyarrow (the Apache Parquet and CSV
readers of the reference libraries) and openpyxl.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow.parquet as pq
import pytest
from conftest import demo_args, demo_inputs

from tracescreen import pipeline
from tracescreen.report.formats import SPREADSHEET_ROWS, too_long_for_spreadsheet
from tracescreen.report.streams import TableStream, write_table
from tracescreen.screening.wide import limit_keys, result_wide
from tracescreen.sinks import MemorySink

SORT = {
    "summary": ["site_id", "analyte", "fraction"],
    "trends": ["site_id", "analyte", "fraction"],
    "exceedances": ["site_id", "analyte", "fraction", "limit_table", "duration", "basis"],
    "retest": ["site_id", "sampled_at", "sample_id", "analyte", "fraction", "reason", "detail"],
}


def _plain(df: pd.DataFrame) -> pd.DataFrame:
    out = df.copy()
    for c in out.columns:
        if isinstance(out[c].dtype, pd.CategoricalDtype) or out[c].dtype == object or pd.api.types.is_string_dtype(out[c]):
            out[c] = out[c].astype(object).where(out[c].notna(), "").astype(str)
    return out


def _same(a: pd.DataFrame, b: pd.DataFrame, keys) -> None:
    a = _plain(a).sort_values(keys, kind="stable").reset_index(drop=True)
    b = _plain(b).sort_values(keys, kind="stable").reset_index(drop=True)
    pd.testing.assert_frame_equal(a, b, check_dtype=False, check_column_type=False)


@pytest.fixture(scope="module")
def whole_and_parts():
    inputs = demo_inputs()
    data = pipeline.load(inputs)
    whole = pipeline.run(inputs, pipeline.Options(part_rows=10**9))
    parts = pipeline.run(inputs, pipeline.Options(part_rows=700))
    return data, whole, parts


def test_run_in_parts_gives_every_table_of_one_pass(whole_and_parts):
    """Summary, trends, exceedances, retest list and screening rows of a run in parts of about 700 results
    equal those of one pass over all results (the engine in one part is the reference)."""
    data, whole, parts = whole_and_parts
    from tracescreen.screening.parts import site_partitions

    assert len(list(site_partitions(data.loaded.accepted, 700))) > 3  # really in parts
    for name, keys in SORT.items():
        _same(getattr(whole, name), getattr(parts, name), keys)
    cols = [c for c in whole.screened.columns if c != "period_id"]
    pd.testing.assert_frame_equal(_plain(whole.screened[cols]), _plain(parts.screened[cols]))  # input order
    assert len(whole.periods) == len(parts.periods)


def test_blank_in_another_part_still_flags_its_batch(whole_and_parts):
    """A contaminated blank flags the samples of its batch even when they are screened in another part
    (the blank rule of the retest list, common practice)."""
    _, whole, parts = whole_and_parts
    w = whole.retest[whole.retest["reason"] == "blank_contamination"]
    p = parts.retest[parts.retest["reason"] == "blank_contamination"]
    assert len(w) == len(p)


def test_wide_table_has_one_row_per_result_and_the_long_tables_statuses(whole_and_parts):
    """One row per accepted result; each limit column holds the status of that result's long row
    (the long table is the reference); worst_status is the strictest of its rows."""
    data, whole, _ = whole_and_parts
    keys = limit_keys(data.limits.entries)
    scr = whole.screened
    wide = result_wide(scr, keys)
    assert len(wide) == len(data.loaded.accepted)
    long = scr[scr["limit_table"].notna() & (scr["limit_table"].astype(str) != "")]
    label = dict(zip(zip(keys["limit_table"], keys["duration"], keys["basis"]), keys["label"]))
    sample = long.drop_duplicates(["file", "sheet", "row", "analyte", "fraction", "limit_table", "duration", "basis"],
                                  keep=False).head(300)
    idx = wide.set_index(["file", "sheet", "row", "analyte", "fraction"])
    for r in sample.itertuples():
        key = (r.limit_table, "" if pd.isna(r.duration) else r.duration, "" if pd.isna(r.basis) else r.basis)
        got = idx.loc[(r.file, r.sheet, r.row, r.analyte, r.fraction), f"{label[key]}: status"]
        assert got == r.status
    from tracescreen.vocabulary import STATUS_CODE

    worst = scr.groupby(["file", "sheet", "row", "analyte", "fraction"], observed=True)["status"].agg(
        lambda s: min(s, key=STATUS_CODE.get))
    got = idx["worst_status"].astype(str)
    assert (got.reindex(worst.index) == worst.astype(str)).all()
    # results numbered in ascending order (a part's rows, no sort) or any other order: the same table
    ids = scr.groupby(["file", "sheet", "row", "analyte", "fraction"], observed=True, sort=False).ngroup().to_numpy()
    pd.testing.assert_frame_equal(result_wide(scr, keys, result_id=ids), wide)
    pd.testing.assert_frame_equal(result_wide(scr, keys, result_id=ids.max() - ids), wide)


def test_screen_command_formats_write_the_same_rows(tmp_path):
    """`screen --format parquet|xlsx` writes the CSV's rows and columns; Parquet keeps text
    dictionary-encoded and dates as dates (read back with pyarrow and openpyxl)."""
    from tracescreen.cli import main

    for fmt in ("csv", "parquet"):
        assert main(["screen", *demo_args(), "--out", str(tmp_path / fmt), "--format", fmt]) == 0
    csv = pd.read_csv(tmp_path / "csv" / "screening.csv", keep_default_na=False)
    par = pd.read_parquet(tmp_path / "parquet" / "screening.parquet")
    assert list(csv.columns) == list(par.columns) and len(csv) == len(par)
    schema = pq.read_schema(tmp_path / "parquet" / "screening.parquet")
    assert str(schema.field("site_id").type) == "dictionary<values=string, indices=int32, ordered=0>"
    assert str(schema.field("sampled_at").type) == "date32[day]"
    assert str(schema.field("value_ug_L").type) == "double"
    assert (csv["site_id"].astype(str).to_numpy() == par["site_id"].astype(str).to_numpy()).all()
    np.testing.assert_allclose(pd.to_numeric(csv["value_ug_L"].replace("", np.nan)).to_numpy(float),
                               par["value_ug_L"].to_numpy(float), rtol=1e-15)
    for name in ("screening_wide", "summary", "trends", "retest", "periods", "exceedances", "rejected"):
        c = pd.read_csv(tmp_path / "csv" / f"{name}.csv", keep_default_na=False)
        p = pd.read_parquet(tmp_path / "parquet" / f"{name}.parquet")
        assert list(c.columns) == list(p.columns) and len(c) == len(p), name


def test_xlsx_stream_continues_on_a_further_sheet(tmp_path, monkeypatch):
    """Past a worksheet's rows the XLSX table continues on a second sheet and the run says so
    (1,048,576 rows per sheet: ECMA-376 / spreadsheet limits; here made small to test)."""
    import openpyxl

    import tracescreen.report.streams as streams

    monkeypatch.setattr(streams, "SPREADSHEET_ROWS", 4)
    frame = pd.DataFrame({"site_id": list("ABCDEFG"), "value_ug_L": np.arange(7.0)})
    s = write_table(frame, tmp_path / "t.xlsx", "xlsx", name="t")
    wb = openpyxl.load_workbook(s.path, read_only=True)
    assert wb.sheetnames == ["t", "t (2)", "t (3)"]
    rows = [r for ws in wb.worksheets for r in ws.iter_rows(min_row=2, values_only=True)]
    assert [r[0] for r in rows] == list("ABCDEFG")


def test_long_table_warning_suggests_parquet():
    """More rows than a worksheet holds (1,048,576 with the header): the run says so and suggests Parquet."""
    assert too_long_for_spreadsheet("screening", SPREADSHEET_ROWS - 1, "csv") is None
    msg = too_long_for_spreadsheet("screening", SPREADSHEET_ROWS, "csv")
    assert "--format parquet" in msg and "1,048,576" in msg
    assert too_long_for_spreadsheet("screening", 10**8, "parquet") is None


def test_stream_leaves_no_file_when_a_run_fails(tmp_path):
    """A table whose run fails is not left half-written (temporary name, removed on error)."""
    path = tmp_path / "t.csv"
    with pytest.raises(RuntimeError):
        with TableStream(path, "csv") as t:
            t.write(pd.DataFrame({"a": [1, 2]}))
            raise RuntimeError("stop")
    assert list(tmp_path.iterdir()) == []


def test_parquet_parts_with_missing_text_in_the_first_part(tmp_path):
    """A text column empty in the first part and filled in a later one is still text (dictionary)."""
    path = tmp_path / "t.parquet"
    with TableStream(path, "parquet") as t:
        t.write(pd.DataFrame({"note": [None, None], "v": [1.0, 2.0]}))
        t.write(pd.DataFrame({"note": ["a", None], "v": [3.0, 4.0]}))
    back = pd.read_parquet(path)
    assert back["note"].astype(object).where(back["note"].notna(), None).tolist() == [None, None, "a", None]


def test_parquet_text_of_every_kind_keeps_its_cells(tmp_path):
    """Arrow-backed text (pandas' str), text objects, and objects mixing numbers with text all come back
    as the same text, missing cells missing (numbers as their text; common practice for text columns)."""
    path = tmp_path / "t.parquet"
    frame = pd.DataFrame({"arrow": pd.Series(["a", None, "b"], dtype="str"),
                          "text": pd.Series(["x", None, "y"], dtype=object),
                          "mixed": pd.Series(["x", 3, np.nan], dtype=object)})
    with TableStream(path, "parquet") as t:
        t.write(frame)
        t.write(pd.concat([frame.iloc[:1], frame.iloc[1:]]))  # a part whose text is in several Arrow chunks
    table = pq.read_table(path)
    assert all(str(table.schema.field(c).type) == "dictionary<values=string, indices=int32, ordered=0>"
               for c in frame.columns)
    assert table.column("arrow").to_pylist() == ["a", None, "b"] * 2
    assert table.column("text").to_pylist() == ["x", None, "y"] * 2
    assert table.column("mixed").to_pylist() == ["x", "3", None] * 2


def test_memory_sink_restores_input_order():
    """Parts handed over out of input order come back in input order."""
    sink = MemorySink()
    sink.add("screening", pd.DataFrame({"v": [2.0, 4.0]}), np.array([1, 3]))
    sink.add("screening", pd.DataFrame({"v": [1.0, 3.0]}), np.array([0, 2]))
    assert sink.table("screening")["v"].tolist() == [1.0, 2.0, 3.0, 4.0]


def test_parquet_categoricals_write_the_same_file_whatever_their_categories_dtype(tmp_path):
    """Categories held by Arrow (pandas' str) or as Python objects give the same Parquet bytes: the
    dictionary is the categories the part uses, in their order, missing cells missing."""
    codes = np.array([2, 0, -1, 2])
    files = []
    for dtype in ("str", object):
        cats = pd.Index(["Zn", "Cu", "Pb", "µg/L"], dtype=dtype)
        frame = pd.DataFrame({"analyte": pd.Categorical.from_codes(codes, categories=cats), "v": [1.0, 2.0, 3.0, 4.0]})
        path = tmp_path / f"{dtype}.parquet"
        with TableStream(path, "parquet") as t:
            t.write(frame)
        files.append(path.read_bytes())
    assert files[0] == files[1]
    assert pq.read_table(tmp_path / "str.parquet").column("analyte").to_pylist() == ["Pb", "Zn", None, "Pb"]
    assert pq.read_table(tmp_path / "str.parquet").column("analyte").chunk(0).dictionary.to_pylist() == ["Zn", "Pb"]


def test_parquet_row_groups_carry_only_their_parts_texts(tmp_path):
    """A run's categories can be every sample id of the run; each part's row group stores only the ids
    it holds (its dictionary), and the values read back are the cells written (common practice of
    dictionary encoding: a dictionary per column chunk, Apache Parquet format specification)."""
    ids = pd.Index([f"L{k:05d}" for k in range(20_000)], dtype="str")
    parts = [np.array([5, 7, 5, -1]), np.array([19_999, 0])]
    path = tmp_path / "ids.parquet"
    with TableStream(path, "parquet") as t:
        for codes in parts:
            t.write(pd.DataFrame({"sample_id": pd.Categorical.from_codes(codes, categories=ids)}))
    f = pq.ParquetFile(path)
    assert [f.read_row_group(k).column("sample_id").chunk(0).dictionary.to_pylist() for k in range(2)] == \
        [["L00005", "L00007"], ["L00000", "L19999"]]
    assert f.read().column("sample_id").to_pylist() == ["L00005", "L00007", "L00005", None, "L19999", "L00000"]


@pytest.mark.parametrize("dtype", ["str", object, "category"])
def test_parquet_free_text_keeps_its_type_and_cells_stored_plain(tmp_path, dtype):
    """The results listed behind a period value (periods' ``results``, formats.FREE_TEXT) are texts that
    do not repeat: stored with PLAIN encoding and no dictionary page (Apache Parquet format
    specification, encodings), still typed ``dictionary<int32, string>`` like every text column, and
    read back cell for cell, repeated and missing cells included (read with pyarrow and pandas)."""
    cells = ["S1 (2024-01-02): 3.1; S2 (2024-02-03): <0.5", None, "S3 (2024-03-04): 7", "S3 (2024-03-04): 7"]
    frame = pd.DataFrame({"site_id": ["A", "A", "B", "B"], "results": pd.Series(cells, dtype=dtype)})
    path = tmp_path / "periods.parquet"
    with TableStream(path, "parquet", name="periods") as t:
        t.write(frame)
        t.write(pd.concat([frame.iloc[2:], frame.iloc[:2]]))
    f = pq.ParquetFile(path)
    chunk = f.metadata.row_group(0).column(1)
    assert chunk.path_in_schema == "results" and not chunk.has_dictionary_page and "PLAIN" in chunk.encodings
    assert f.metadata.row_group(0).column(0).has_dictionary_page  # the other text stays dictionary-encoded
    table = f.read()
    assert str(table.schema.field("results").type) == "dictionary<values=string, indices=int32, ordered=0>"
    assert table.column("results").to_pylist() == cells + cells[2:] + cells[:2]
    back = pd.read_parquet(path)["results"]
    assert isinstance(back.dtype, pd.CategoricalDtype) and sorted(back.cat.categories) == sorted(set(cells) - {None})
