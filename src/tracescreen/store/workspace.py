"""The workspace: every imported campaign in one SQLite database file, with provenance.

A workspace is a directory holding ``workspace.sqlite``. Each import runs in one SQLite
transaction [SQLiteCommit]_, so it lands whole or not at all, whatever happens to the process (a bad file,
a crash, SIGKILL). The database runs in write-ahead-log mode [SQLiteWAL]_: a reader (the dashboard,
``screen``) sees the state before an import or after it, never part of it, and is not blocked.

Relational tables hold what is small and queried (imports, files, sheets, rejected rows with
their reasons and cells, supersessions, screening runs). Each lab file's bytes are kept
(zstd-compressed, checked against the file's SHA-256), so the original cells of every row stay
available exactly as reported. The accepted results are stored column-wise, one Arrow IPC [ArrowIPC]_
file per lab file split into BLOB parts, so that they load back into the accepted-results
DataFrame faster than re-reading the lab files.

Identity of a result (``RESULT_KEY``): site, sample, sampling date-time, analyte, fraction and
laboratory. A file whose SHA-256 is already stored adds nothing. Otherwise, per key, the
incoming rows are *new* (key not yet stored), *unchanged* (the same values as the current rows
of that key, compared on ``VALUE_COLUMNS``; not stored again) or *revised* (the values differ:
the incoming rows become current and the earlier ones are marked superseded by this import;
they stay stored and visible in the history). A key missing from a revised file is left as it
was: a revision cannot withdraw a result.

References
----------
[SQLiteCommit]_, [SQLiteWAL]_, [ArrowIPC]_ (docs/references.md)
"""

from __future__ import annotations

import contextlib
import json
import sqlite3
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from tracescreen._internal.hashing import sha256_hex
from tracescreen.io import loading
from tracescreen.io.columns import load_column_map
from tracescreen.store.blobs import _STORED, _decode, _to_frame
from tracescreen.store.database import WorkspaceError, connect
from tracescreen.store.importing import Importing


def open_workspace(directory: str | Path, create: bool = False) -> "Workspace":
    """Open the workspace in ``directory`` (creating it when ``create`` is true).

    Raises
    ------
    WorkspaceError
        No workspace there (and ``create`` is false), or the file is not a tracescreen workspace.
    """
    path, con = connect(directory, create)
    return Workspace(Path(directory), path, con)


class Workspace(Importing):
    """An open workspace (use :func:`open_workspace`); close it or use it as a context manager."""

    def __init__(self, directory: Path, path: Path, con: sqlite3.Connection):
        self.directory, self.path, self.con = directory, path, con

    def close(self) -> None:
        """Close the database connection."""
        self.con.close()

    def __enter__(self) -> "Workspace":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @contextlib.contextmanager
    def reading(self):
        """``with ws.reading():`` every read inside sees one state of the workspace.

        An import committed meanwhile by another process is not seen until the block ends.
        """
        if self.con.in_transaction:
            yield self
            return
        self.con.execute("BEGIN")
        try:
            yield self
        finally:
            self.con.execute("COMMIT")

    def _read(self, fn):
        """Run ``fn(con)`` in one read transaction: a consistent snapshot of the workspace."""
        with self.reading():
            return fn(self.con)

    def known_sha256(self) -> set[str]:
        """SHA-256 of every file stored in the workspace."""
        return {r[0] for r in self.con.execute("SELECT sha256 FROM files")}

    # ---- reading back ----------------------------------------------------------------------
    def _load_table(self, columns: list[str] | None = None, current: bool = True) -> pa.Table:
        """Stored results (current only, or all) as one Arrow table, in one snapshot."""
        def fetch(con):
            parts: dict[int, list[bytes]] = {}
            for file_id, data in con.execute("SELECT file_id, data FROM segments ORDER BY file_id, part"):
                parts.setdefault(file_id, []).append(data)
            blobs = [b"".join(p) if len(p) > 1 else p[0] for p in parts.values()]
            gone = np.fromiter((r[0] for r in con.execute("SELECT result_id FROM supersessions")),
                               dtype=np.int64)
            return blobs, gone

        blobs, gone = self._read(fetch)
        want = columns or loading.ACCEPTED_COLUMNS + ["result_id"]
        if not blobs:
            return _STORED.empty_table().select(want)
        need = want if not (current and len(gone)) or "result_id" in want else want + ["result_id"]
        tables = [_decode_stored(b, need) for b in blobs]
        table = pa.concat_tables(tables) if len(tables) > 1 else tables[0]
        if current and len(gone):
            keep = ~np.isin(table.column("result_id").to_numpy(), gone)
            table = table.filter(pa.array(keep)).select(want)
        return table

    def current_results(self) -> pd.DataFrame:
        """The current results as the accepted-results DataFrame (DEVELOPERS.md contract)."""
        table = self._load_table(loading.ACCEPTED_COLUMNS)
        return _to_frame(table) if table.num_rows else loading.empty_accepted()

    def results_history(self) -> pd.DataFrame:
        """Every stored result, current and superseded, with import, file hash and supersession."""
        def fetch(con):
            files = pd.read_sql_query(
                "SELECT f.file_id, f.import_id, f.sha256 AS file_sha256, i.finished_at AS imported_at, "
                "f.first_result_id FROM files f JOIN imports i USING (import_id) "
                "ORDER BY f.first_result_id", con)
            sup = pd.read_sql_query("SELECT result_id, import_id AS superseded_by FROM supersessions", con)
            return files, sup, _to_frame(self._load_table(current=False))

        files, sup, df = self._read(fetch)
        pos = np.searchsorted(files["first_result_id"].to_numpy(), df["result_id"].to_numpy(),
                              side="right") - 1
        for c in ("file_id", "import_id", "file_sha256", "imported_at"):
            df[c] = files[c].to_numpy()[pos] if len(df) else files[c].iloc[:0].to_numpy()
        df = df.merge(sup, on="result_id", how="left")
        df["superseded_by"] = df["superseded_by"].astype("Int64")
        return df

    def imports(self) -> pd.DataFrame:
        """Every import: times, tool version, read options, inputs with SHA-256, row counts."""
        return pd.read_sql_query("SELECT * FROM imports ORDER BY import_id", self.con)

    def files(self) -> pd.DataFrame:
        """Every stored file with its import, SHA-256, counts and sheets."""
        return pd.read_sql_query(
            "SELECT f.*, (SELECT group_concat(sheet, ', ') FROM sheets s WHERE s.file_id = f.file_id) "
            "AS sheets FROM files f ORDER BY file_id", self.con)

    def sheets(self) -> pd.DataFrame:
        """Every stored sheet: header row, rows read, accepted, rejected and blank."""
        return pd.read_sql_query(
            "SELECT f.name AS file, f.path, s.sheet, f.sha256, s.header_row, s.rows_read, "
            "s.rows_accepted AS accepted, s.rows_rejected AS rejected, s.blank_rows, f.import_id "
            "FROM sheets s JOIN files f USING (file_id) ORDER BY f.file_id, s.sheet", self.con)

    def rejected_rows(self) -> pd.DataFrame:
        """Every rejected row: file, sheet, row, reason, import id and the original cells (JSON)."""
        return pd.read_sql_query(
            "SELECT f.name AS file, r.sheet, r.row, r.reason, f.import_id, f.sha256 AS file_sha256, "
            "r.cells FROM rejected r JOIN files f USING (file_id) ORDER BY f.file_id, r.sheet, r.row",
            self.con)

    def original_bytes(self, file_id: int) -> bytes:
        """The bytes of a stored lab file, exactly as imported (checked against its SHA-256)."""
        row = self.con.execute("SELECT o.data, f.sha256, f.size_bytes FROM originals o "
                               "JOIN files f USING (file_id) WHERE file_id = ?", (file_id,)).fetchone()
        if row is None:
            raise WorkspaceError(f"no file {file_id} in the workspace")
        data = pa.decompress(row[0], row[2], "zstd", asbytes=True)
        if sha256_hex(data) != row[1]:
            raise WorkspaceError(f"file {file_id}: stored bytes do not match its SHA-256")
        return data

    def original_cells(self, file_id: int, sheet: str = "") -> pd.DataFrame:
        """The cells of one stored sheet as reported (original headers), with their row numbers."""
        name, opts, cols_text = self.con.execute(
            "SELECT f.name, i.read_options, i.columns_text FROM files f JOIN imports i "
            "USING (import_id) WHERE f.file_id = ?", (file_id,)).fetchone()
        with tempfile.TemporaryDirectory() as tmp:
            path = Path(tmp) / name
            path.write_bytes(self.original_bytes(file_id))
            options = loading.LoadOptions(**json.loads(opts))
            if cols_text:
                (Path(tmp) / "columns.yaml").write_text(cols_text, encoding="utf-8")
                options.column_map = load_column_map(Path(tmp) / "columns.yaml")
            raws, _ = loading.read_raw(path, options)
        for raw in raws:
            if raw.sheet == sheet:
                return raw.cells.assign(row=raw.rows)[["row", *raw.cells.columns]]
        raise WorkspaceError(f"no sheet '{sheet}' in stored file {name}")

    def current_count(self) -> int:
        """Number of current results (stored minus superseded), without loading them."""
        return self.con.execute("SELECT (SELECT coalesce(sum(rows_stored), 0) FROM files) - "
                                "(SELECT count(*) FROM supersessions)").fetchone()[0]

    def load_result(self, sites: pd.DataFrame | None = None,
                    sites_name: str = "the sites file") -> loading.LoadResult:
        """The current results as a ``loading.LoadResult``, as if the lab files were read now.

        ``rejected`` holds every row rejected at import (with its original cells) and, when
        ``sites`` is given, the current results whose site is not in it. ``files`` has one line per
        stored file and sheet; its ``accepted`` counts the current results from it.
        """
        with self.reading():
            acc = self.current_results()
            rej = self.rejected_rows()
            files = self.sheets()
            superseded = self.con.execute("SELECT count(*) FROM supersessions").fetchone()[0]
        cells = pd.DataFrame([json.loads(c) for c in rej["cells"]], index=rej.index, dtype=str)
        rejected = pd.concat([rej[["file", "sheet", "row", "reason"]], cells], axis=1)
        if sites is not None:
            unknown = ~acc["site_id"].isin(sites["site_id"]).to_numpy()
            if unknown.any():
                out = acc.loc[unknown, ["file", "sheet", "row", "site_id", "sample_id", "sampled_at",
                                        "analyte", "fraction", "result_text", "unit"]].astype(str)
                out.insert(3, "reason", "site '" + out["site_id"] + f"' is not in {sites_name}")
                rejected = pd.concat([rejected, out], ignore_index=True)
                acc = acc[~unknown].reset_index(drop=True)
        rejected, set_aside = loading.split_set_aside(rejected)
        for col, df in (("accepted", acc), ("set_aside", set_aside), ("rejected", rejected)):
            n = df.groupby(["file", "sheet"], observed=True).size()
            files[col] = [int(n.get((f, s), 0)) for f, s in zip(files["file"], files["sheet"])]
        warnings = [f"workspace {self.directory}: {len(acc)} current results from {len(files)} file "
                    f"sheets; {superseded} superseded results are kept in its history, not screened"]
        return loading.LoadResult(acc, rejected, files, warnings, set_aside)

    def last_import_id(self) -> int | None:
        """The id of the latest import (None in an empty workspace)."""
        return self.con.execute("SELECT max(import_id) FROM imports").fetchone()[0]

    def screening_runs(self) -> pd.DataFrame:
        """Every recorded screening run with the SHA-256 of its limit tables and sites file."""
        return pd.read_sql_query("SELECT * FROM screening_runs ORDER BY run_id", self.con)

    # ---- integrity -------------------------------------------------------------------------
    def check(self) -> list[str]:
        """Check the database, every stored file, segment and count; return the problems found."""
        from tracescreen.store.check import check_workspace

        return self._read(check_workspace)


#: Columns added to the stored results after workspaces were first written, with the value an
#: older stored file gets for them when read (they are derived from stored columns, never hashed).
_ADDED_COLUMNS = {"qualifier_meaning": "", "ph": float("nan"), "doc_mg_L": float("nan"), "temperature_C": float("nan"),
                  "quantitation_limit_ug_L": float("nan")}


def _decode_stored(blob: bytes, columns: list[str]) -> pa.Table:
    """One stored file's results with ``columns``; columns it predates are filled (:data:`_ADDED_COLUMNS`)."""
    have = set(_decode(blob, []).schema.names) if any(c in _ADDED_COLUMNS for c in columns) else set(columns)
    table = _decode(blob, [c for c in columns if c in have])
    for c in columns:
        if c not in have:
            fill = _ADDED_COLUMNS[c]
            arr = (pa.array([fill] * table.num_rows, type=pa.string()).dictionary_encode() if isinstance(fill, str)
                   else pa.array(np.full(table.num_rows, fill), type=pa.float64()))
            table = table.append_column(c, arr)
    return table.select(columns)
