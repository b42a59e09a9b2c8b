"""Adding lab files to the workspace: one atomic import, each result new, unchanged or revised.

Every file is read and normalised first (a bad file raises before anything is written), then one
write transaction stores each file's bytes, its sheets, its accepted results as Arrow IPC segments
(:mod:`tracescreen.store.blobs`), its rejected rows, and the supersessions of revised results
(:mod:`tracescreen.store.revisions`). A file whose SHA-256 is stored already adds nothing.
"""

from __future__ import annotations

import dataclasses
import json
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Callable, Iterable

import numpy as np
import pandas as pd
import pyarrow as pa

from tracescreen import __version__
from tracescreen._internal.hashing import file_sha256, sha256_hex
from tracescreen.io import loading
from tracescreen.io.files import check_lab_file
from tracescreen.progress import report
from tracescreen.store.blobs import _encode
from tracescreen.store.check import REJECTED_DIGEST_KEY, rejected_digest
from tracescreen.store.database import now, write
from tracescreen.store.outcomes import FileBatch, FileOutcome, ImportSummary
from tracescreen.store.revisions import RESULT_KEY, VALUE_COLUMNS, classify, probe_hash, row_hashes

PART_BYTES = 16 * 1024 * 1024   # a stored results file is split into BLOB parts of at most this size
HASHES = ["key_hash", "value_hash"]


def read_file(path: str | Path, options: loading.LoadOptions | None = None,
              site_ids: set[str] | None = None, sites_name: str = "the sites file",
              data: bytes | None = None, pool: ThreadPoolExecutor | None = None) -> FileBatch:
    """Read and normalise one lab file, keeping its bytes (raises ``loading.LoadError``)."""
    p = Path(path)
    data = p.read_bytes() if data is None else data
    digest = sha256_hex(data)
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


def options_record(options: loading.LoadOptions | None) -> str:
    """The reading options of an import as JSON (the column map is stored as its own text)."""
    opts = dataclasses.asdict(options or loading.LoadOptions())
    opts.pop("column_map", None)
    return json.dumps(opts, sort_keys=True, default=str)


def input_record(path) -> tuple[str | None, str | None]:
    """Absolute path and SHA-256 of an input file (None, None without one)."""
    if not path:
        return None, None
    return str(Path(path).resolve()), file_sha256(path)


class Importing:
    """The writing side of :class:`tracescreen.store.workspace.Workspace` (imports and screening runs)."""

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
        paths = [Path(p) for p in paths]
        with ThreadPoolExecutor(1) as pool:
            for k, p in enumerate(paths):
                report("read", k, len(paths), unit="files", detail=p.name)
                check_lab_file(p)
                data = p.read_bytes()
                digest = sha256_hex(data)
                if digest in known or digest in seen:
                    note = (f"same content as {seen[digest]} in this import" if digest in seen
                            else "the same file is already in the workspace")
                    skipped.append(FileOutcome(p.name, digest, "already imported", note=note))
                    continue
                say(f"reading {p.name}")
                batches.append(read_file(p, options, site_ids, sites_name, data, pool))
                seen[digest] = p.name
        report("read", len(paths), len(paths), unit="files", finished=True)
        inputs = {"options": options_record(options), "columns": columns_path, "sites": sites_path}
        return self.store(batches, skipped, inputs, say)

    def store(self, batches: list[FileBatch], skipped: list[FileOutcome] | None = None,
              inputs: dict | None = None, say: Callable[[str], None] = lambda m: None) -> ImportSummary:
        """Store read files as one import, in one transaction (see the module docstring)."""
        skipped = list(skipped or [])
        if not batches:
            return ImportSummary(None, skipped)
        inputs = inputs or {}
        cols = inputs.get("columns")
        started = now()
        with write(self.con):
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
                (started, __version__, inputs.get("options", options_record(None)),
                 *input_record(cols), Path(cols).read_text(encoding="utf-8") if cols else None,
                 *input_record(inputs.get("sites")))).fetchone()[0]
            current = self._current_keys()
            next_id = self.con.execute(
                "SELECT coalesce(max(first_result_id + rows_stored), 1) FROM files").fetchone()[0]
            outcomes = []
            for k, b in enumerate(todo):
                report("store", k, len(todo), unit="files", detail=b.name)
                outcome, current, next_id = self._store_file(import_id, b, current, next_id, say)
                outcomes.append(outcome)
            totals = [sum(getattr(o, a) for o in outcomes)
                      for a in ("rows_read", "new", "unchanged", "revised", "superseded")]
            totals.append(sum(o.rejected + o.set_aside for o in outcomes))  # rows not stored
            self.con.execute(
                "UPDATE imports SET finished_at = ?, files = ?, rows_read = ?, rows_new = ?, "
                "rows_unchanged = ?, rows_revised = ?, rows_superseded = ?, rows_rejected = ? "
                "WHERE import_id = ?", (now(), len(outcomes), *totals, import_id))
            say("committing")
            report("store", len(todo), len(todo), unit="files", detail="committing")
        say("committed")
        report("store", len(todo), len(todo), unit="files", finished=True)
        return ImportSummary(import_id, outcomes + skipped)

    def _current_keys(self) -> pd.DataFrame:
        """result_id, key hash ``k`` and value hash ``v`` of every current result."""
        probe = self.con.execute(
            "SELECT value FROM workspace_info WHERE key = 'row_hash_probe'").fetchone()[0]
        if probe == probe_hash():
            t = self._load_table(["result_id"] + HASHES, current=True)
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
                             (file_id, part, sha256_hex(piece), piece))
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
        rows = list(zip(rej["sheet"].astype(str), rej["row"].astype(int).tolist(), rej["reason"].astype(str), lines))
        self.con.executemany("INSERT INTO rejected VALUES (?, ?, ?, ?, ?)", ((file_id, *r) for r in rows))
        # the rows' SHA-256, so that `history --check` finds a rejected row changed on disk
        self.con.execute("INSERT INTO workspace_info VALUES (?, ?)",
                         (REJECTED_DIGEST_KEY.format(file_id=file_id), rejected_digest(rows)))

    def record_screening_run(self, command: str, results: int, limit_files: Iterable[str | Path],
                             sites_path: str | Path | None, summary: dict) -> int:
        """Record a screening run with the SHA-256 of every limit table and of the sites file."""
        limits = [{"path": str(Path(p).resolve()), "sha256": file_sha256(p)}
                  for p in sorted(map(str, limit_files))]
        combined = sha256_hex("".join(f"{d['sha256']}  {Path(d['path']).name}\n" for d in limits).encode())
        with write(self.con):
            return self.con.execute(
                "INSERT INTO screening_runs VALUES (NULL, ?, ?, ?, (SELECT max(import_id) FROM "
                "imports), ?, ?, ?, ?, ?, ?) RETURNING run_id",
                (now(), __version__, command, int(results), json.dumps(limits), combined,
                 *input_record(sites_path), json.dumps(summary, default=int))).fetchone()[0]
