"""The workspace's SQLite schema and format number (one place, read by the workspace and its check).

Format history: 1, the first; 2 adds ``retest_requests`` (the status of each retest request line,
:mod:`tracescreen.store.requests`). An older workspace is brought up to date when it is opened
(:data:`MIGRATIONS`, each step in one transaction).

The design (why SQLite in WAL mode, what each table holds) is in DEVELOPERS.md "The workspace".
``rows_rejected`` counts every row not stored: rejected rows and rows set aside (not results to
screen), told apart by their reason in table ``rejected`` (``loading.SET_ASIDE_PREFIX``).
"""

SCHEMA_VERSION = 2
APPLICATION_ID = 0x54534357  # "TSCW": marks the SQLite file as a tracescreen workspace

#: format 2: retest request lines sent to a laboratory and what came of them (one row per line)
_RETEST_REQUESTS = """
CREATE TABLE retest_requests (
    request_id TEXT PRIMARY KEY, lab TEXT NOT NULL, batch TEXT NOT NULL, site_id TEXT NOT NULL,
    sample_id TEXT NOT NULL, sampled_at TEXT NOT NULL, analytes TEXT NOT NULL, action TEXT NOT NULL,
    reasons TEXT NOT NULL, reason_codes TEXT NOT NULL,
    status TEXT NOT NULL CHECK (status IN ('requested', 'confirmed', 'not_confirmed')),
    requested_at TEXT NOT NULL, updated_at TEXT NOT NULL, note TEXT NOT NULL DEFAULT '');
"""

#: the statements that bring a workspace of format N to format N + 1
MIGRATIONS = {1: _RETEST_REQUESTS}

_SCHEMA = """
CREATE TABLE workspace_info (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE imports (
    import_id INTEGER PRIMARY KEY, started_at TEXT NOT NULL, finished_at TEXT NOT NULL,
    tool_version TEXT NOT NULL, read_options TEXT NOT NULL,
    columns_file TEXT, columns_sha256 TEXT, columns_text TEXT, sites_file TEXT, sites_sha256 TEXT,
    files INTEGER NOT NULL, rows_read INTEGER NOT NULL, rows_new INTEGER NOT NULL,
    rows_unchanged INTEGER NOT NULL, rows_revised INTEGER NOT NULL,
    rows_superseded INTEGER NOT NULL, rows_rejected INTEGER NOT NULL);
CREATE TABLE files (
    file_id INTEGER PRIMARY KEY, import_id INTEGER NOT NULL REFERENCES imports(import_id),
    name TEXT NOT NULL, path TEXT NOT NULL, sha256 TEXT NOT NULL UNIQUE, size_bytes INTEGER NOT NULL,
    rows_read INTEGER NOT NULL, rows_new INTEGER NOT NULL, rows_unchanged INTEGER NOT NULL,
    rows_revised INTEGER NOT NULL, rows_superseded INTEGER NOT NULL, rows_rejected INTEGER NOT NULL,
    first_result_id INTEGER NOT NULL, rows_stored INTEGER NOT NULL);
CREATE TABLE sheets (
    file_id INTEGER NOT NULL REFERENCES files(file_id), sheet TEXT NOT NULL,
    header_row INTEGER NOT NULL, header TEXT NOT NULL, rows_read INTEGER NOT NULL,
    rows_accepted INTEGER NOT NULL, rows_rejected INTEGER NOT NULL, blank_rows INTEGER NOT NULL,
    PRIMARY KEY (file_id, sheet));
CREATE TABLE originals (
    file_id INTEGER PRIMARY KEY REFERENCES files(file_id), codec TEXT NOT NULL, data BLOB NOT NULL);
CREATE TABLE segments (
    segment_id INTEGER PRIMARY KEY, file_id INTEGER NOT NULL REFERENCES files(file_id),
    part INTEGER NOT NULL, sha256 TEXT NOT NULL, data BLOB NOT NULL, UNIQUE (file_id, part));
CREATE TABLE rejected (
    file_id INTEGER NOT NULL REFERENCES files(file_id), sheet TEXT NOT NULL, row INTEGER NOT NULL,
    reason TEXT NOT NULL, cells TEXT NOT NULL, PRIMARY KEY (file_id, sheet, row));
CREATE TABLE supersessions (
    result_id INTEGER PRIMARY KEY, import_id INTEGER NOT NULL REFERENCES imports(import_id),
    file_id INTEGER NOT NULL REFERENCES files(file_id));
CREATE TABLE screening_runs (
    run_id INTEGER PRIMARY KEY, run_at TEXT NOT NULL, tool_version TEXT NOT NULL,
    command TEXT NOT NULL, last_import_id INTEGER, results INTEGER NOT NULL,
    limits TEXT NOT NULL, limits_sha256 TEXT NOT NULL, sites_file TEXT, sites_sha256 TEXT,
    summary TEXT NOT NULL);
CREATE INDEX segments_by_file ON segments(file_id);
""" + _RETEST_REQUESTS

