"""The workspace: idempotent imports, revisions with history, provenance, bad inputs, export."""

import hashlib
import json
import sqlite3
import zipfile

import numpy as np
import openpyxl
import pandas as pd
import pyarrow.dataset as ds
import pytest
from workspace_support import assert_same_state, lab_rows, same_results, snapshot, write_lab_csv

from tracescreen.io import loading
from tracescreen.store.parquet import export_parquet
from tracescreen.store.workspace import WorkspaceError, open_workspace


@pytest.fixture
def ws_dir(tmp_path):
    return tmp_path / "ws"


def _import(ws_dir, *paths, **kw):
    with open_workspace(ws_dir, create=True) as ws:
        return ws.import_files(paths, **kw)


def test_reimport_same_file_adds_nothing(tmp_path, ws_dir):
    """Importing a file again, or a renamed copy (same SHA-256), leaves the workspace unchanged (README.md#workspace-keep-every-campaign)."""
    a = write_lab_csv(tmp_path / "a.csv", lab_rows(40))
    first = _import(ws_dir, a)
    assert (first.import_id, first.total("new"), first.total("rejected")) == (1, 40, 0)
    before = snapshot(ws_dir)
    copy = tmp_path / "a-resent.csv"
    copy.write_bytes(a.read_bytes())
    again = _import(ws_dir, a, copy)
    assert again.import_id is None
    assert [f.status for f in again.files] == ["already imported"] * 2
    assert "unchanged" in again.lines()[-1]
    assert_same_state(before, snapshot(ws_dir))


def test_round_trip_equals_the_loader(tmp_path, ws_dir):
    """current_results() returns exactly the loader's accepted DataFrame: values, dtypes, provenance."""
    rows = lab_rows(64, seed=3)
    rows.loc[5, "result"] = "<0.5"
    rows.loc[6, "unit"] = "mg/L"
    a = write_lab_csv(tmp_path / "a.csv", rows)
    _import(ws_dir, a)
    with open_workspace(ws_dir) as ws:
        got = ws.current_results()
    want = loading.load_results([a]).accepted
    same_results(got, want)


def test_revised_file_supersedes_the_right_rows_and_keeps_history(tmp_path, ws_dir):
    """A revised report: 3 changed values supersede exactly their earlier rows; 27 unchanged, 8 new."""
    a_rows = lab_rows(40, seed=1)
    a = write_lab_csv(tmp_path / "report.csv", a_rows)
    _import(ws_dir, a)
    b_rows = pd.concat([a_rows.iloc[:30], lab_rows(8, seed=2, first_sample=100)], ignore_index=True)
    changed = [2, 11, 25]
    b_rows.loc[changed, "result"] = ["999", "0.001", "<0.1"]
    b = write_lab_csv(tmp_path / "report-rev1.csv", b_rows)
    summary = _import(ws_dir, b)
    f = summary.files[0]
    assert (f.new, f.unchanged, f.revised, f.superseded, f.rejected) == (8, 27, 3, 3, 0)
    with open_workspace(ws_dir) as ws:
        cur = ws.current_results()
        hist = ws.results_history()
        assert ws.check() == []
    assert len(cur) == 40 + 8          # 3 replaced in place, 10 untouched rows of the first report stay
    gone = hist[hist["superseded_by"].notna()]
    assert sorted(gone["row"]) == [c + 2 for c in changed]          # CSV line = index + header + 1
    assert set(gone["file"]) == {"report.csv"} and set(gone["superseded_by"]) == {2}
    assert sorted(gone["result_text"]) == sorted(a_rows.loc[changed, "result"])
    revised = cur[cur["file"] == "report-rev1.csv"]
    assert len(revised) == 3 + 8
    assert set(revised.loc[revised["sample_id"].isin(a_rows["sample_id"]), "result_text"]) == {"999", "0.001", "<0.1"}
    assert cur.duplicated(["sample_id", "analyte", "fraction"]).sum() == 0


def test_replicates_compare_as_a_multiset(tmp_path, ws_dir):
    """Two replicate rows of one key: same pair again = unchanged; one of them alone = a revision of both."""
    rows = lab_rows(8)
    rows = pd.concat([rows, rows.iloc[[0]].assign(result="7.7")], ignore_index=True)
    _import(ws_dir, write_lab_csv(tmp_path / "a.csv", rows))
    again = _import(ws_dir, write_lab_csv(tmp_path / "b.csv", rows.iloc[::-1]))
    assert (again.total("unchanged"), again.total("revised")) == (9, 0)
    single = _import(ws_dir, write_lab_csv(tmp_path / "c.csv", rows.iloc[[0]]))
    assert (single.total("revised"), single.total("superseded")) == (1, 2)


def test_rejected_rows_are_stored_with_reason_file_and_cells(tmp_path, ws_dir):
    """Rows read = stored + set aside + rejected; each row not stored keeps its reason, file and
    original cells (an analyte outside the registry is set aside, not rejected)."""
    rows = lab_rows(16)
    rows.loc[3, "unit"] = "mg/kg"
    rows.loc[9, "analyte"] = "unobtainium"
    summary = _import(ws_dir, write_lab_csv(tmp_path / "a.csv", rows))
    assert summary.total("rows_read") == 16 == summary.total("new") + summary.total("set_aside") + summary.total("rejected")
    assert (summary.total("set_aside"), summary.total("rejected")) == (1, 1)
    with open_workspace(ws_dir) as ws:
        rej = ws.rejected_rows()
    assert list(rej["row"]) == [5, 11] and set(rej["file"]) == {"a.csv"}
    assert "mg/kg" in rej["reason"][0] and "unobtainium" in rej["reason"][1]
    assert json.loads(rej["cells"][0])["unit"] == "mg/kg"


def test_provenance_original_file_and_cells(tmp_path, ws_dir):
    """The stored file is byte-identical (SHA-256 via hashlib); the original cells of each row are kept."""
    rows = lab_rows(24, seed=5)
    rows.loc[4, "result"] = "0.0120"
    rows.loc[4, "unit"] = "mg/L"
    a = write_lab_csv(tmp_path / "a.csv", rows)
    _import(ws_dir, a)
    with open_workspace(ws_dir) as ws:
        files = ws.files()
        assert files["sha256"][0] == hashlib.sha256(a.read_bytes()).hexdigest()
        assert ws.original_bytes(int(files["file_id"][0])) == a.read_bytes()
        cells = ws.original_cells(int(files["file_id"][0]))
        imports = ws.imports()
    assert cells.loc[cells["row"] == 6, ["result", "unit"]].values.tolist() == [["0.0120", "mg/L"]]
    assert imports["finished_at"][0] >= imports["started_at"][0] != ""


def test_xlsx_sheets_keep_their_names(tmp_path, ws_dir):
    """An XLSX workbook with two sheets: each result's provenance names its sheet and row."""
    wb = openpyxl.Workbook()
    for k, name in enumerate(["Spring", "Autumn"]):
        sh = wb.active if k == 0 else wb.create_sheet()
        sh.title = name
        rows = lab_rows(8, seed=k, first_sample=10 * k)
        sh.append(list(rows.columns))
        for r in rows.itertuples(index=False):
            sh.append(list(r))
    wb.save(tmp_path / "book.xlsx")
    _import(ws_dir, tmp_path / "book.xlsx")
    with open_workspace(ws_dir) as ws:
        cur = ws.current_results()
        assert list(ws.sheets()["sheet"]) == ["Autumn", "Spring"]
        assert ws.original_cells(1, "Autumn")["sample_id"].tolist() == lab_rows(8, 1, 10)["sample_id"].tolist()
    assert cur.groupby("sheet")["row"].agg(["min", "max"]).values.tolist() == [[2, 9], [2, 9]]


def _bad_inputs(tmp_path):
    junk = tmp_path / "junk.csv"
    junk.write_bytes(bytes(np.random.default_rng(0).integers(0, 256, 4096, dtype=np.uint8)))
    empty = tmp_path / "empty.csv"
    empty.write_bytes(b"")
    latin = tmp_path / "latin1.csv"
    text = ",".join(lab_rows(1).columns) + "\nS1,W-1,2020-01-01,lead,total,5,\u00b5g/L,0.1,Lab\n"
    latin.write_bytes(text.encode("latin-1"))
    book = tmp_path / "book.xlsx"
    wb = openpyxl.Workbook()
    wb.active.append(list(lab_rows(1).columns))
    wb.active.append(list(lab_rows(1).iloc[0]))
    wb.save(book)
    cut = tmp_path / "cut.xlsx"
    cut.write_bytes(book.read_bytes()[:700])
    not_zip = tmp_path / "renamed.xlsx"
    not_zip.write_bytes(b"Site,Result\n1,2\n")
    return [(junk, {}, "junk.csv: binary data"), (empty, {}, "empty.csv: the file is empty"),
            (latin, {}, "latin1.csv: not utf-8 text (byte 0xB5"),
            (cut, {}, "cut.xlsx:"), (not_zip, {}, "renamed.xlsx: not an Excel"),
            (book, {"options": loading.LoadOptions(sheet="Results")}, "book.xlsx: no sheet 'Results'")]


def test_corrupt_inputs_clear_errors_and_nothing_stored(tmp_path, ws_dir):
    """Binary junk, empty, Latin-1 with µ, truncated or fake XLSX, wrong sheet: LoadError naming the
    file; the workspace (holding an earlier import) is unchanged, even when a good file comes first."""
    _import(ws_dir, write_lab_csv(tmp_path / "good.csv", lab_rows(16)))
    before = snapshot(ws_dir)
    fresh = write_lab_csv(tmp_path / "fresh.csv", lab_rows(16, first_sample=50))
    for path, kw, message in _bad_inputs(tmp_path):
        with pytest.raises(loading.LoadError) as exc:
            _import(ws_dir, fresh, path, **kw)
        assert str(exc.value).lower().startswith(message.lower()), str(exc.value)
        assert_same_state(before, snapshot(ws_dir))
    with open_workspace(ws_dir) as ws:
        assert ws.check() == []


def test_latin1_file_with_its_encoding_given_is_read(tmp_path, ws_dir):
    """The same Latin-1 file with encoding latin-1 imports, µg/L read as micrograms per litre."""
    latin = next(p for p, _, _ in _bad_inputs(tmp_path) if p.name == "latin1.csv")
    s = _import(ws_dir, latin, options=loading.LoadOptions(encoding="latin-1"))
    assert s.total("new") == 1
    with open_workspace(ws_dir) as ws:
        assert ws.current_results()["value_ug_L"].tolist() == [5.0]
        assert ws.original_cells(1)["unit"].tolist() == ["\u00b5g/L"]


def test_integrity_check_finds_damage(tmp_path, ws_dir):
    """check() is empty for a sound workspace and names a damaged segment or a wrong count."""
    _import(ws_dir, write_lab_csv(tmp_path / "a.csv", lab_rows(40)))
    with open_workspace(ws_dir) as ws:
        assert ws.check() == []
    con = sqlite3.connect(ws_dir / "workspace.sqlite")
    data = bytearray(con.execute("SELECT data FROM segments").fetchone()[0])
    data[len(data) // 2] ^= 0xFF
    with con:
        con.execute("UPDATE segments SET data = ?", (bytes(data),))
        con.execute("UPDATE files SET rows_new = rows_new - 1")
    con.close()
    with open_workspace(ws_dir) as ws:
        problems = ws.check()
    assert any("does not match its SHA-256" in p for p in problems)
    assert any("rows read 40 != new + unchanged + revised + rejected" in p for p in problems)


def test_open_errors(tmp_path):
    """No workspace, a junk file, another application's SQLite database: WorkspaceError, clear words."""
    with pytest.raises(WorkspaceError, match="no workspace here"):
        open_workspace(tmp_path / "none")
    (tmp_path / "junk").mkdir()
    (tmp_path / "junk" / "workspace.sqlite").write_bytes(b"not a database" * 100)
    with pytest.raises(WorkspaceError, match="cannot open the workspace database"):
        open_workspace(tmp_path / "junk")
    (tmp_path / "other").mkdir()
    with sqlite3.connect(tmp_path / "other" / "workspace.sqlite") as con:
        con.execute("CREATE TABLE t (x)")
    with pytest.raises(WorkspaceError, match="not a tracescreen workspace"):
        open_workspace(tmp_path / "other")


def test_export_parquet_partitioned_by_year(tmp_path, ws_dir):
    """The export holds exactly the current results, one Hive folder per sampling year (pyarrow reads it)."""
    a_rows = lab_rows(200, seed=4)
    _import(ws_dir, write_lab_csv(tmp_path / "a.csv", a_rows))
    _import(ws_dir, write_lab_csv(tmp_path / "b.csv", a_rows.iloc[:8].assign(result="1.25")))
    with open_workspace(ws_dir) as ws:
        files = export_parquet(ws, tmp_path / "export")
        cur = ws.current_results()
        with pytest.raises(WorkspaceError, match="not an empty folder"):
            export_parquet(ws, tmp_path / "export")
    years = sorted(cur["sampled_at"].dt.year.unique())
    assert sorted(p.parent.name for p in files) == [f"year={y}" for y in years]
    back = ds.dataset(tmp_path / "export", format="parquet", partitioning="hive").to_table().to_pandas()
    assert len(back) == len(cur) == 200
    assert (back["year"] == back["sampled_at"].dt.year).all()
    key = ["file", "row"]
    got = back.sort_values(key).reset_index(drop=True)
    want = cur.sort_values(key).reset_index(drop=True)
    pd.testing.assert_series_equal(got["value_ug_L"], want["value_ug_L"])
    assert got["import_id"].tolist() == [2 if f == "b.csv" else 1 for f in got["file"]]


def test_screening_run_records_input_hashes(tmp_path, ws_dir):
    """A screening run records each limit table's and the sites file's SHA-256 (FIPS 180-2 B.1: 'abc')."""
    _import(ws_dir, write_lab_csv(tmp_path / "a.csv", lab_rows(8)))
    table = tmp_path / "t.yaml"
    table.write_bytes(b"abc")
    sites = tmp_path / "sites.csv"
    sites.write_bytes(b"")
    with open_workspace(ws_dir) as ws:
        ws.record_screening_run("screen", 8, [table], sites, {"meets": 8})
        run = ws.screening_runs().iloc[0]
    abc = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"   # FIPS 180-2, B.1
    empty = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"  # SHA-256 of no bytes
    assert json.loads(run["limits"])[0]["sha256"] == abc
    assert run["sites_sha256"] == empty and run["last_import_id"] == 1
    assert json.loads(run["summary"]) == {"meets": 8}


def test_same_content_twice_in_one_import(tmp_path, ws_dir):
    """The same bytes under two names in one command: stored once, the second reported."""
    a = write_lab_csv(tmp_path / "a.csv", lab_rows(8))
    b = tmp_path / "b.csv"
    b.write_bytes(a.read_bytes())
    s = _import(ws_dir, a, b)
    assert [f.status for f in s.files] == ["stored", "already imported"]
    assert "same content as a.csv" in s.files[1].note


def test_zip_truncation_is_what_the_xlsx_case_tests(tmp_path):
    """Guard for the corrupt-input test: the truncated workbook really is a damaged zip package."""
    cut = next(p for p, _, _ in _bad_inputs(tmp_path) if p.name == "cut.xlsx")
    with pytest.raises(zipfile.BadZipFile):
        zipfile.ZipFile(cut)


def test_header_only_file_is_zero_rows(tmp_path, ws_dir):
    """A report with a header and no data rows: 0 rows read, stored as a file, nothing else."""
    path = write_lab_csv(tmp_path / "none.csv", lab_rows(0))
    s = _import(ws_dir, path)
    assert (s.import_id, s.total("rows_read"), s.total("new")) == (1, 0, 0)
    with open_workspace(ws_dir) as ws:
        assert len(ws.current_results()) == 0 and ws.check() == []
