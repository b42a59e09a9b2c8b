"""A damaged workspace is refused by every command with one line naming `history --check`; the check finds it.

Sources: SQLite file format (https://www.sqlite.org/fileformat.html: 4,096-byte or larger pages; page 1
holds the header, later pages the tables' b-trees); the workspace's own design (DEVELOPERS.md "The
workspace": every segment and every file's rejected rows carry a SHA-256).
"""

from __future__ import annotations

import sqlite3

import pytest
from workspace_support import lab_rows, write_lab_csv

from tracescreen.cli import main
from tracescreen.store.workspace import open_workspace

LIMITS = "limits/who_gdwq_2022.yaml"


@pytest.fixture
def workspace(tmp_path):
    ws = tmp_path / "ws"
    rows = lab_rows(400)
    rows.loc[3, "result"] = "not a number"  # one rejected row
    lab = write_lab_csv(tmp_path / "lab.csv", rows)
    assert main(["import", str(lab), "--workspace", str(ws)]) == 0
    return ws


def _commands(ws, tmp_path):
    return {
        "screen": ["screen", "--workspace", str(ws), "--limits", LIMITS, "--out", str(tmp_path / "out")],
        "export": ["export", "--workspace", str(ws), "--parquet", str(tmp_path / "pq")],
        "import": ["import", str(write_lab_csv(tmp_path / "more.csv", lab_rows(16, seed=5, first_sample=9000))),
                   "--workspace", str(ws)],
        "history": ["history", "--workspace", str(ws), "--rejected"],
    }


def _one_line_error(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert err and "Traceback" not in "\n".join(err)
    return err[-1]


def test_empty_workspace_file_is_not_a_workspace(tmp_path, capsys):
    """A 0-byte workspace.sqlite used to be re-created as an empty workspace that `history --check` called sound."""
    ws = tmp_path / "ws"
    ws.mkdir()
    (ws / "workspace.sqlite").write_bytes(b"")
    for argv in (["history", "--workspace", str(ws), "--check"], ["screen", "--workspace", str(ws), "--limits", LIMITS,
                                                                  "--out", str(tmp_path / "o")]):
        assert main(argv) == 2
        assert "an empty file, not a workspace" in _one_line_error(capsys)
    assert (ws / "workspace.sqlite").stat().st_size == 0  # left as found


def test_new_workspace_is_created_whole(tmp_path):
    ws = tmp_path / "new"
    with open_workspace(ws, create=True) as w:
        assert w.check() == []
    assert [p.name for p in ws.iterdir() if "creating" in p.name] == []


def test_changed_segment_is_refused_by_every_command(workspace, tmp_path, capsys):
    """A changed result segment used to crash screen/export/import (LZ4 decompress failed, flatbuffer Footer);
    `history --check` found it."""
    con = sqlite3.connect(workspace / "workspace.sqlite")
    data = bytearray(con.execute("SELECT data FROM segments LIMIT 1").fetchone()[0])
    data[len(data) // 2] ^= 0xFF
    con.execute("UPDATE segments SET data = ? WHERE segment_id = (SELECT min(segment_id) FROM segments)", (bytes(data),))
    con.commit()
    con.close()
    for name, argv in _commands(workspace, tmp_path).items():
        if name == "history":
            continue
        assert main(argv) == 2, name
        line = _one_line_error(capsys)
        assert "the workspace is damaged" in line and "history --check" in line, name
    assert main(["history", "--workspace", str(workspace), "--check"]) == 2
    assert "does not match its SHA-256" in capsys.readouterr().out


def test_changed_rejected_row_fails_the_check(workspace, capsys):
    """A corrupted rejected-row record used to pass `history --check`."""
    con = sqlite3.connect(workspace / "workspace.sqlite")
    con.execute("UPDATE rejected SET reason = 'nothing wrong here'")
    con.commit()
    con.close()
    assert main(["history", "--workspace", str(workspace), "--check"]) == 2
    assert "rejected rows do not match the SHA-256 recorded at import" in capsys.readouterr().out


def test_unreadable_rejected_cells_are_one_line(workspace, tmp_path, capsys):
    con = sqlite3.connect(workspace / "workspace.sqlite")
    con.execute("UPDATE rejected SET cells = '{\"broken'")
    con.commit()
    con.close()
    assert main(_commands(workspace, tmp_path)["screen"]) == 2
    assert "history --check" in _one_line_error(capsys)
    assert main(["history", "--workspace", str(workspace), "--check"]) == 2


def test_zeroed_page_is_found_and_refused(workspace, tmp_path, capsys):
    """A zeroed page used to crash `history --check` itself, and `screen` screened the workspace silently."""
    path = workspace / "workspace.sqlite"
    con = sqlite3.connect(path)
    con.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    page = con.execute("PRAGMA page_size").fetchone()[0]
    pages = con.execute("PRAGMA page_count").fetchone()[0]
    con.close()
    raw = bytearray(path.read_bytes())
    hit = 0
    for k in range(1, pages):  # zero every page after the first that holds b-tree data
        block = raw[k * page:(k + 1) * page]
        if block[:1] in (b"\x0d", b"\x05", b"\x0a", b"\x02"):
            raw[k * page:(k + 1) * page] = bytes(page)
            hit += 1
            break
    assert hit
    path.write_bytes(bytes(raw))
    assert main(["history", "--workspace", str(workspace), "--check"]) == 2
    out = capsys.readouterr().out
    assert "problem" in out
    for name in ("screen", "export"):
        code = main(_commands(workspace, tmp_path)[name])
        assert code == 2, name
        assert "history --check" in _one_line_error(capsys)
