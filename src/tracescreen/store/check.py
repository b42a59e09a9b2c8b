"""Integrity check of a workspace: the database, every stored file and segment, every count.

Run inside one read transaction (:meth:`tracescreen.store.workspace.Workspace.check`), so it checks
one consistent state even while an import is running in another process.

References
----------
[SQLitePragma]_ (docs/references.md)
"""

from __future__ import annotations

import sqlite3

import pyarrow as pa

from tracescreen._internal.hashing import sha256_hex
from tracescreen.store.blobs import _decode
from tracescreen.store.schema import SCHEMA_VERSION


def check_workspace(con: sqlite3.Connection) -> list[str]:
    """Return the problems found (an empty list: the workspace is sound)."""
    problems = [f"database: {r[0]}" for r in con.execute("PRAGMA integrity_check") if r[0] != "ok"]
    problems += [f"foreign key: table {r[0]} row {r[1]} refers to a missing {r[2]} row"
                 for r in con.execute("PRAGMA foreign_key_check")]
    if con.execute("PRAGMA user_version").fetchone()[0] != SCHEMA_VERSION:
        problems.append("workspace format differs from this tracescreen's")
    if problems:
        return problems
    files = {r[0]: r for r in con.execute(
        "SELECT file_id, name, sha256, size_bytes, rows_read, rows_new, rows_unchanged, rows_revised, "
        "rows_rejected, first_result_id, rows_stored FROM files")}
    problems += _check_originals(con, files)
    problems += _check_segments(con, files)
    sheets = {r[0]: r[1:] for r in con.execute(
        "SELECT file_id, sum(rows_read), sum(rows_accepted), sum(rows_rejected) FROM sheets "
        "GROUP BY file_id")}
    rejected = dict(con.execute("SELECT file_id, count(*) FROM rejected GROUP BY file_id").fetchall())
    for fid, (_, name, _, _, read, new, unch, rev, rej, _, stored) in files.items():
        if read != new + unch + rev + rej:
            problems.append(f"{name}: rows read {read} != new + unchanged + revised + rejected")
        if stored != new + rev:
            problems.append(f"{name}: {stored} results stored, new + revised = {new + rev}")
        if sheets.get(fid) != (read, new + unch + rev, rej):
            problems.append(f"{name}: sheet counts {sheets.get(fid)} differ from the file's")
        if rejected.get(fid, 0) != rej:
            problems.append(f"{name}: {rejected.get(fid, 0)} rejected rows stored, {rej} counted")
    for (import_id,) in con.execute(
            "SELECT i.import_id FROM imports i LEFT JOIN files f USING (import_id) "
            "GROUP BY i.import_id HAVING i.finished_at = '' OR i.files != count(f.file_id) "
            "OR i.rows_read != coalesce(sum(f.rows_read), 0) "
            "OR i.rows_new != coalesce(sum(f.rows_new), 0) "
            "OR i.rows_unchanged != coalesce(sum(f.rows_unchanged), 0) "
            "OR i.rows_revised != coalesce(sum(f.rows_revised), 0) "
            "OR i.rows_superseded != coalesce(sum(f.rows_superseded), 0) "
            "OR i.rows_rejected != coalesce(sum(f.rows_rejected), 0)"):
        problems.append(f"import {import_id}: its totals differ from the sum over its files")
    orphans = con.execute(
        "SELECT count(*) FROM supersessions s WHERE NOT EXISTS (SELECT 1 FROM files f WHERE "
        "s.result_id >= f.first_result_id AND s.result_id < f.first_result_id + f.rows_stored "
        "AND f.import_id < s.import_id)").fetchone()[0]
    if orphans:
        problems.append(f"{orphans} supersessions name no earlier stored result")
    return problems


def _check_originals(con, files) -> list[str]:
    problems = []
    stored = set()
    for fid, codec, data in con.execute("SELECT file_id, codec, data FROM originals"):
        stored.add(fid)
        name, sha, size = files[fid][1:4]
        try:
            raw = pa.decompress(data, size, codec, asbytes=True)
        except (pa.ArrowException, OSError) as exc:
            problems.append(f"{name}: stored file cannot be decompressed ({exc})")
            continue
        if sha256_hex(raw) != sha:
            problems.append(f"{name}: stored file does not match its SHA-256")
    problems += [f"{files[f][1]}: original file not stored" for f in files if f not in stored]
    return problems


def _check_segments(con, files) -> list[str]:
    problems = []
    parts: dict[int, list[bytes]] = {}
    for seg_id, fid, digest, data in con.execute(
            "SELECT segment_id, file_id, sha256, data FROM segments ORDER BY file_id, part"):
        if sha256_hex(data) != digest:
            problems.append(f"segment {seg_id} of {files[fid][1]}: content does not match its SHA-256")
        parts.setdefault(fid, []).append(data)
    for fid, (_, name, *_, first, stored) in files.items():
        if fid not in parts:
            if stored:
                problems.append(f"{name}: {stored} results recorded, none stored")
            continue
        try:
            ids = _decode(b"".join(parts[fid]), ["result_id"]).column("result_id").to_numpy()
        except (pa.ArrowException, OSError) as exc:
            problems.append(f"{name}: stored results unreadable ({exc})")
            continue
        if len(ids) != stored:
            problems.append(f"{name}: {len(ids)} results stored, {stored} recorded")
        elif len(ids) and (ids.min() != first or ids.max() != first + stored - 1 or len(set(ids)) != stored):
            problems.append(f"{name}: stored result ids are not {first}..{first + stored - 1}")
    return problems
