"""The workspace's SQLite database: opening, creating, and one write transaction at a time.

The database runs in write-ahead-log mode [SQLiteWAL]_: a reader sees the state before a write
transaction or after it, never part of it, and is not blocked; a transaction is atomic and durable
through a crash [SQLiteCommit]_. The schema and its format number: :mod:`tracescreen.store.schema`.
"""

from __future__ import annotations

import sqlite3
from datetime import datetime, timezone
from pathlib import Path

from tracescreen import __version__
from tracescreen.store.revisions import probe_hash
from tracescreen.store.schema import _SCHEMA, APPLICATION_ID, MIGRATIONS, SCHEMA_VERSION

WORKSPACE_FILE = "workspace.sqlite"


class WorkspaceError(ValueError):
    """A workspace that cannot be used as asked (the message says which and why)."""


def now() -> str:
    """The time now (UTC, ISO 8601 with milliseconds), as stored in the workspace."""
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds")


def workspace_path(directory: str | Path) -> Path:
    """The database file of the workspace in ``directory``."""
    return Path(directory) / WORKSPACE_FILE


def connect(directory: str | Path, create: bool = False) -> tuple[Path, sqlite3.Connection]:
    """Open the workspace database in ``directory`` (creating it when ``create`` is true): its path and connection.

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
            initialise(con)
        elif app_id != APPLICATION_ID:
            raise WorkspaceError(f"{path}: not a tracescreen workspace")
        elif version < SCHEMA_VERSION and all(v in MIGRATIONS for v in range(version, SCHEMA_VERSION)):
            migrate(con, version)
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
    return path, con


def initialise(con: sqlite3.Connection) -> None:
    """Create the schema in an empty database (one transaction) and mark it as a workspace."""
    con.execute("PRAGMA page_size = 65536")
    con.execute("PRAGMA journal_mode = WAL")
    with write(con):
        for stmt in _SCHEMA.split(";"):
            if stmt.strip():
                con.execute(stmt)
        con.executemany("INSERT INTO workspace_info VALUES (?, ?)",
                        [("created_at", now()), ("created_by", f"tracescreen {__version__}"),
                         ("row_hash_probe", probe_hash())])
        con.execute(f"PRAGMA application_id = {APPLICATION_ID}")
        con.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")


def migrate(con: sqlite3.Connection, version: int) -> None:
    """Bring a workspace of an older format up to :data:`SCHEMA_VERSION`, one format per transaction
    (a crash leaves it at a whole format, never between two)."""
    for v in range(version, SCHEMA_VERSION):
        with write(con):
            if con.execute("PRAGMA user_version").fetchone()[0] != v:  # another process migrated it meanwhile
                continue
            for stmt in MIGRATIONS[v].split(";"):
                if stmt.strip():
                    con.execute(stmt)
            con.execute(f"PRAGMA user_version = {v + 1}")


class write:
    """``with write(con):`` one write transaction, rolled back on any exception."""

    def __init__(self, con: sqlite3.Connection):
        self.con = con

    def __enter__(self):
        self.con.execute("BEGIN IMMEDIATE")

    def __exit__(self, exc_type, *_):
        if exc_type is None:
            self.con.execute("COMMIT")
        elif self.con.in_transaction:
            self.con.execute("ROLLBACK")
