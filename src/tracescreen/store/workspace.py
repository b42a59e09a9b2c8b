"""The workspace: every imported campaign in one SQLite database file, with provenance.

A workspace is a directory holding ``workspace.sqlite``. Each import runs in one SQLite
transaction [1]_, so it lands whole or not at all, whatever happens to the process (a bad file,
a crash, SIGKILL). The database runs in write-ahead-log mode [2]_: a reader (the dashboard,
``screen``) sees the state before an import or after it, never part of it, and is not blocked.

Relational tables hold what is small and queried (imports, files, sheets, rejected rows with
their reasons and cells, supersessions, screening runs). Each lab file's bytes are kept
(zstd-compressed, checked against the file's SHA-256), so the original cells of every row stay
available exactly as reported. The accepted results are stored column-wise, one Arrow IPC [3]_
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
.. [1] SQLite, "Atomic Commit In SQLite", https://www.sqlite.org/atomiccommit.html
.. [2] SQLite, "Write-Ahead Logging", https://www.sqlite.org/wal.html
.. [3] Apache Arrow, "Arrow IPC file format", https://arrow.apache.org/docs/format/Columnar.html
"""

from __future__ import annotations

import contextlib
import dataclasses
import hashlib
import json
import sqlite3
import tempfile
from concurrent.futures import ThreadPoolExecutor
from datetime import datetime, timezone
from pathlib import Path
from typing import Callable, Iterable

import numpy as np
import pandas as pd
import pyarrow as pa

from tracescreen import __version__
from tracescreen.io import loading
from tracescreen.store.revisions import RESULT_KEY, VALUE_COLUMNS, classify, probe_hash, row_hashes
from tracescreen.io.columns import load_column_map
from tracescreen.store.outcomes import FileBatch, FileOutcome, ImportSummary
from tracescreen.store.blobs import _STORED, _decode, _encode, _to_frame  # noqa: F401
from tracescreen.store.schema import _SCHEMA, APPLICATION_ID, SCHEMA_VERSION  # noqa: F401

WORKSPACE_FILE = "workspace.sqlite"
PART_BYTES = 16 * 1024 * 1024   # a stored results file is split into BLOB parts of at most this size
_HASHES = ["key_hash", "value_hash"]




class WorkspaceError(ValueError):
    """A workspace that cannot be used as asked (the message says which and why)."""


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds")


def _sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def file_sha256(path: str | Path) -> str:
    """SHA-256 (FIPS 180-4) of a file's bytes, as hex."""
    return _sha256(Path(path).read_bytes())


# --------------------------------------------------------------------------------------------
# opening and creating
# --------------------------------------------------------------------------------------------

def workspace_path(directory: str | Path) -> Path:
    return Path(directory) / WORKSPACE_FILE


def open_workspace(directory: str | Path, create: bool = False) -> "Workspace":
    """Open the workspace in ``directory`` (creating it when ``create`` is true).

    Raises
    ------
    WorkspaceError
        No workspace there (and ``create`` is false), or the file is not a tracescreen workspace.
    """
    directory = Path(directory)
    path = workspace_path(directory)
    if not path.is_file():
        if not create:
            raise WorkspaceError(f"{directory}: no workspace here (create one with "
                                 f"'tracescreen import FILE... --workspace {directory}')")
        if directory.exists() and not directory.is_dir():
            raise WorkspaceError(f"{directory}: exists and is not a directory")
        directory.mkdir(parents=True, exist_ok=True)
    con = None
    try:
        con = sqlite3.connect(path, isolation_level=None, timeout=120.0, check_same_thread=False)
        con.execute("PRAGMA busy_timeout = 120000")
        con.execute("PRAGMA foreign_keys = ON")
        con.execute("PRAGMA synchronous = FULL")
        app_id = con.execute("PRAGMA application_id").fetchone()[0]
        version = con.execute("PRAGMA user_version").fetchone()[0]
        if app_id == 0 and version == 0 and con.execute(
                "SELECT count(*) FROM sqlite_master").fetchone()[0] == 0:
            _initialise(con)
        elif app_id != APPLICATION_ID:
            raise WorkspaceError(f"{path}: not a tracescreen workspace")
        elif version != SCHEMA_VERSION:
            raise WorkspaceError(f"{path}: workspace format {version}; this tracescreen reads "
                                 f"format {SCHEMA_VERSION}")
        con.execute("PRAGMA journal_mode = WAL")
    except sqlite3.DatabaseError as exc:
        if con is not None:
            con.close()
        raise WorkspaceError(f"{path}: cannot open the workspace database ({exc})") from None
    except WorkspaceError:
        con.close()
        raise
    return Workspace(directory, path, con)


def _initialise(con: sqlite3.Connection) -> None:
    con.execute("PRAGMA page_size = 65536")
    con.execute("PRAGMA journal_mode = WAL")
    with _write(con):
        for stmt in _SCHEMA.split(";"):
            if stmt.strip():
                con.execute(stmt)
        con.executemany("INSERT INTO workspace_info VALUES (?, ?)",
                        [("created_at", _now()), ("created_by", f"tracescreen {__version__}"),
                         ("row_hash_probe", probe_hash())])
        con.execute(f"PRAGMA application_id = {APPLICATION_ID}")
        con.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")


class _write:
    """``with _write(con):`` one write transaction, rolled back on any exception."""

    def __init__(self, con: sqlite3.Connection):
        self.con = con

    def __enter__(self):
        self.con.execute("BEGIN IMMEDIATE")

    def __exit__(self, exc_type, *_):
        if exc_type is None:
            self.con.execute("COMMIT")
        elif self.con.in_transaction:
            self.con.execute("ROLLBACK")


# --------------------------------------------------------------------------------------------
# reading files for an import
# --------------------------------------------------------------------------------------------

def read_file(path: str | Path, options: loading.LoadOptions | None = None,
              site_ids: set[str] | None = None, sites_name: str = "the sites file",
              data: bytes | None = None, pool: ThreadPoolExecutor | None = None) -> FileBatch:
    """Read and normalise one lab file, keeping its bytes (raises ``loading.LoadError``)."""
    p = Path(path)
    data = p.read_bytes() if data is None else data
    digest = _sha256(data)
    compressing = pool.submit(pa.compress, data, "zstd", asbytes=True) if pool else None
    raws, read_digest = loading.read_raw(p, options)
    if read_digest != digest:
        raise loading.LoadError(f"{p.name}: the file changed while it was being read")
    accepted, rejected, sheets = [], [], []
    for raw in raws:
        acc, rej = loading.normalise(raw, options, site_ids, sites_name)
        accepted.append(acc)
        rejected.append(rej)
        sheets.append({"sheet": raw.sheet, "header_row": raw.header_row,
                       "header": json.dumps(list(map(str, raw.cells.columns)), ensure_ascii=False),
                       "rows_read": len(raw.cells), "rows_accepted": len(acc),
                       "rows_rejected": len(rej), "blank_rows": raw.blank_rows})
    original = compressing.result() if compressing else pa.compress(data, "zstd", asbytes=True)
    return FileBatch(p.name, str(p.resolve()), digest, len(data), original, sheets,
                     loading.concat_accepted(accepted),
                     pd.concat(rejected, ignore_index=True) if len(rejected) > 1 else rejected[0])


def _options_record(options: loading.LoadOptions | None) -> str:
    opts = dataclasses.asdict(options or loading.LoadOptions())
    opts.pop("column_map", None)
    return json.dumps(opts, sort_keys=True, default=str)


# --------------------------------------------------------------------------------------------
# the workspace
# --------------------------------------------------------------------------------------------

class Workspace:
    """An open workspace (use :func:`open_workspace`); close it or use it as a context manager."""

    def __init__(self, directory: Path, path: Path, con: sqlite3.Connection):
        self.directory, self.path, self.con = directory, path, con

    def close(self) -> None:
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
        return {r[0] for r in self.con.execute("SELECT sha256 FROM files")}

    # ---- import ----------------------------------------------------------------------------
    def import_files(self, paths: Iterable[str | Path], options: loading.LoadOptions | None = None,
                     sites: pd.DataFrame | None = None, *, sites_path: str | Path | None = None,
                     columns_path: str | Path | None = None,
                     progress: Callable[[str], None] | None = None) -> ImportSummary:
        """Read lab files and add them to the workspace in one atomic import.

        Every file is read and checked before anything is written: a file that cannot be read
        raises ``loading.LoadError`` and the workspace is left as it was. A file whose SHA-256 is
        already stored (or that appears twice in ``paths``) is skipped and reported.
        """
        say = progress or (lambda msg: None)
        site_ids = set(sites["site_id"]) if sites is not None else None
        sites_name = Path(sites_path).name if sites_path else "the sites file"
        known = self.known_sha256()
        batches: list[FileBatch] = []
        skipped: list[FileOutcome] = []
        seen: dict[str, str] = {}
        with ThreadPoolExecutor(1) as pool:
            for p in map(Path, paths):
                if not p.is_file():
                    raise loading.LoadError(f"{p}: file not found")
                data = p.read_bytes()
                digest = _sha256(data)
                if digest in known or digest in seen:
                    note = (f"same content as {seen[digest]} in this import" if digest in seen
                            else "the same file is already in the workspace")
                    skipped.append(FileOutcome(p.name, digest, "already imported", note=note))
                    continue
                say(f"reading {p.name}")
                batches.append(read_file(p, options, site_ids, sites_name, data, pool))
                seen[digest] = p.name
        inputs = {"options": _options_record(options), "columns": columns_path, "sites": sites_path}
        return self.store(batches, skipped, inputs, say)

    def store(self, batches: list[FileBatch], skipped: list[FileOutcome] | None = None,
              inputs: dict | None = None, say: Callable[[str], None] = lambda m: None) -> ImportSummary:
        """Store read files as one import, in one transaction (see the module docstring)."""
        skipped = list(skipped or [])
        if not batches:
            return ImportSummary(None, skipped)
        inputs = inputs or {}
        cols = inputs.get("columns")
        started = _now()
        with _write(self.con):
            say("transaction begun")
            known = self.known_sha256()  # again, now under the write lock
            todo = [b for b in batches if b.sha256 not in known]
            skipped += [FileOutcome(b.name, b.sha256, "already imported",
                                    note="imported meanwhile by another process")
                        for b in batches if b.sha256 in known]
            if not todo:
                return ImportSummary(None, skipped)
            import_id = self.con.execute(
                "INSERT INTO imports VALUES (NULL, ?, '', ?, ?, ?, ?, ?, ?, ?, 0, 0, 0, 0, 0, 0, 0) "
                "RETURNING import_id",
                (started, __version__, inputs.get("options", _options_record(None)),
                 *_input_record(cols), Path(cols).read_text(encoding="utf-8") if cols else None,
                 *_input_record(inputs.get("sites")))).fetchone()[0]
            current = self._current_keys()
            next_id = self.con.execute(
                "SELECT coalesce(max(first_result_id + rows_stored), 1) FROM files").fetchone()[0]
            outcomes = []
            for b in todo:
                outcome, current, next_id = self._store_file(import_id, b, current, next_id, say)
                outcomes.append(outcome)
            totals = [sum(getattr(o, a) for o in outcomes)
                      for a in ("rows_read", "new", "unchanged", "revised", "superseded")]
            totals.append(sum(o.rejected + o.set_aside for o in outcomes))  # rows not stored
            self.con.execute(
                "UPDATE imports SET finished_at = ?, files = ?, rows_read = ?, rows_new = ?, "
                "rows_unchanged = ?, rows_revised = ?, rows_superseded = ?, rows_rejected = ? "
                "WHERE import_id = ?", (_now(), len(outcomes), *totals, import_id))
            say("committing")
        say("committed")
        return ImportSummary(import_id, outcomes + skipped)

    def _current_keys(self) -> pd.DataFrame:
        """result_id, key hash ``k`` and value hash ``v`` of every current result."""
        probe = self.con.execute(
            "SELECT value FROM workspace_info WHERE key = 'row_hash_probe'").fetchone()[0]
        if probe == probe_hash():
            t = self._load_table(["result_id"] + _HASHES, current=True)
            return pd.DataFrame({"result_id": t.column("result_id").to_numpy(),
                                 "k": t.column("key_hash").to_numpy(),
                                 "v": t.column("value_hash").to_numpy()})
        cur = self._load_table(["result_id"] + RESULT_KEY + VALUE_COLUMNS, current=True)
        k, v = row_hashes(cur)
        return pd.DataFrame({"result_id": cur.column("result_id").to_numpy(), "k": k, "v": v})

    def _store_file(self, import_id: int, b: FileBatch, current: pd.DataFrame, next_id: int, say):
        table = pa.Table.from_pandas(b.accepted, preserve_index=False)
        k, v = row_hashes(table)
        inc = pd.DataFrame({"k": k, "v": v})
        status, superseded = classify(inc, current)
        store = status != "unchanged"
        if not store.all():
            table, k, v = table.filter(pa.array(store)), k[store], v[store]
        ids = np.arange(next_id, next_id + table.num_rows, dtype=np.int64)
        o = FileOutcome(b.name, b.sha256, "stored", sum(s["rows_read"] for s in b.sheets),
                        int((status == "new").sum()), int((status == "unchanged").sum()),
                        int((status == "revised").sum()), len(superseded))
        if b.rejected is not None and len(b.rejected):
            not_kept, aside = loading.split_set_aside(b.rejected)
            o.rejected, o.set_aside = len(not_kept), len(aside)
        file_id = self.con.execute(
            "INSERT INTO files VALUES (NULL, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING file_id",
            (import_id, b.name, b.path, b.sha256, b.size_bytes, o.rows_read, o.new, o.unchanged,
             o.revised, o.superseded, o.rejected + o.set_aside, next_id, len(ids))).fetchone()[0]
        self.con.executemany(
            "INSERT INTO sheets VALUES (:file_id, :sheet, :header_row, :header, :rows_read, "
            ":rows_accepted, :rows_rejected, :blank_rows)", [{"file_id": file_id, **s} for s in b.sheets])
        self.con.execute("INSERT INTO originals VALUES (?, 'zstd', ?)", (file_id, b.original))
        table = table.append_column("result_id", pa.array(ids)).append_column(
            "key_hash", pa.array(k)).append_column("value_hash", pa.array(v))
        data = _encode(table)
        for part, start in enumerate(range(0, len(data), PART_BYTES)):
            piece = data[start:start + PART_BYTES]
            self.con.execute("INSERT INTO segments VALUES (NULL, ?, ?, ?, ?)",
                             (file_id, part, _sha256(piece), piece))
            say(f"stored a segment of {len(piece)} bytes")
        if len(b.rejected):
            self._put_rejected(file_id, b.rejected)
        if len(superseded):
            self.con.executemany("INSERT INTO supersessions VALUES (?, ?, ?)",
                                 ((int(r), import_id, file_id) for r in superseded))
        added = pd.DataFrame({"result_id": ids, "k": k, "v": v})
        if len(current):
            current = current[~current["result_id"].isin(superseded).to_numpy()]
            added = pd.concat([current, added], ignore_index=True)
        return o, added, next_id + len(ids)

    def _put_rejected(self, file_id: int, rej: pd.DataFrame) -> None:
        cells = rej.drop(columns=["file", "sheet", "row", "reason"]).dropna(axis=1, how="all")
        lines = (cells.fillna("").astype(str).to_json(orient="records", lines=True,
                                                      force_ascii=False).splitlines()
                 if cells.shape[1] else ["{}"] * len(rej))
        self.con.executemany(
            "INSERT INTO rejected VALUES (?, ?, ?, ?, ?)",
            zip([file_id] * len(rej), rej["sheet"].astype(str), rej["row"].astype(int).tolist(),
                rej["reason"].astype(str), lines))

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
        return pd.read_sql_query("SELECT * FROM imports ORDER BY import_id", self.con)

    def files(self) -> pd.DataFrame:
        return pd.read_sql_query(
            "SELECT f.*, (SELECT group_concat(sheet, ', ') FROM sheets s WHERE s.file_id = f.file_id) "
            "AS sheets FROM files f ORDER BY file_id", self.con)

    def sheets(self) -> pd.DataFrame:
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
        if _sha256(data) != row[1]:
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
        return self.con.execute("SELECT max(import_id) FROM imports").fetchone()[0]

    # ---- screening runs --------------------------------------------------------------------
    def record_screening_run(self, command: str, results: int, limit_files: Iterable[str | Path],
                             sites_path: str | Path | None, summary: dict) -> int:
        """Record a screening run with the SHA-256 of every limit table and of the sites file."""
        limits = [{"path": str(Path(p).resolve()), "sha256": file_sha256(p)}
                  for p in sorted(map(str, limit_files))]
        combined = _sha256("".join(f"{d['sha256']}  {Path(d['path']).name}\n" for d in limits).encode())
        with _write(self.con):
            return self.con.execute(
                "INSERT INTO screening_runs VALUES (NULL, ?, ?, ?, (SELECT max(import_id) FROM "
                "imports), ?, ?, ?, ?, ?, ?) RETURNING run_id",
                (_now(), __version__, command, int(results), json.dumps(limits), combined,
                 *_input_record(sites_path), json.dumps(summary, default=int))).fetchone()[0]

    def screening_runs(self) -> pd.DataFrame:
        return pd.read_sql_query("SELECT * FROM screening_runs ORDER BY run_id", self.con)

    # ---- integrity -------------------------------------------------------------------------
    def check(self) -> list[str]:
        """Check the database, every stored file, segment and count; return the problems found."""
        from tracescreen.store.check import check_workspace

        return self._read(check_workspace)


def _input_record(path) -> tuple[str | None, str | None]:
    if not path:
        return None, None
    return str(Path(path).resolve()), file_sha256(path)


#: Columns added to the stored results after workspaces were first written, with the value an
#: older stored file gets for them when read (they are derived from stored columns, never hashed).
_ADDED_COLUMNS = {"qualifier_meaning": "", "quantitation_limit_ug_L": float("nan")}


def _decode_stored(blob: bytes, columns: list[str]) -> pa.Table:
    """One stored file's results with ``columns``; columns it predates are filled (:data:`_ADDED_COLUMNS`)."""
    have = set(_decode(blob, []).schema.names) if any(c in _ADDED_COLUMNS for c in columns) else set(columns)
    table = _decode(blob, [c for c in columns if c in have])
    for c in columns:
        if c not in have:
            fill = _ADDED_COLUMNS[c]
            col = pa.array([fill] * table.num_rows, type=pa.string()).dictionary_encode() if isinstance(fill, str) \
                else pa.array(np.full(table.num_rows, fill), type=pa.float64())
            table = table.append_column(c, col)
    return table.select(columns)

