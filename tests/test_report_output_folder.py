"""Outputs are never half-written: staged under temporary names, renamed together, the run manifest last.

Sources: POSIX rename(2) / Python ``os.replace`` (a rename within one file system is atomic: a reader sees
the old file or the new one); POSIX setrlimit(2) RLIMIT_FSIZE (a write past the limit fails with EFBIG when
SIGXFSZ is ignored), used here to make writes fail as on a full disk; SQLite result code SQLITE_FULL
("database or disk is full") for the workspace.
"""

from __future__ import annotations

import errno
import json
import os
import resource
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from workspace_support import lab_rows, write_lab_csv

from tracescreen.cli import main
from tracescreen.report import streams
from tracescreen.report.output_folder import MANIFEST, read_manifest

ROOT = Path(__file__).resolve().parents[1]
LIMITS = str(ROOT / "limits" / "who_gdwq_2022.yaml")


def _screen(lab, out) -> list[str]:
    return ["screen", str(lab), "--limits", LIMITS, "--out", str(out)]


@pytest.fixture
def lab(tmp_path):
    return write_lab_csv(tmp_path / "lab.csv", lab_rows(800))


def _partials(folder: Path) -> list[str]:
    return [p.name for p in folder.iterdir() if ".partial-" in p.name]


def test_manifest_is_written_last_and_matches_every_output(lab, tmp_path):
    out = tmp_path / "out"
    assert main(_screen(lab, out)) == 0
    record = read_manifest(out)
    assert record is not None and record["command"] == "screen" and record["complete"]
    names = {o["file"] for o in record["outputs"]}
    assert {"screening.csv", "rejected.csv", "retest.csv", "trends.csv"} <= names
    screening = next(o for o in record["outputs"] if o["file"] == "screening.csv")
    assert screening["rows"] == sum(1 for _ in open(out / "screening.csv", encoding="utf-8")) - 1
    assert any(i["file"] == "lab.csv" and len(i["sha256"]) == 64 for i in record["inputs"])
    assert _partials(out) == []
    # a changed output no longer matches: a reader can tell
    (out / "retest.csv").write_text("tampered")
    assert read_manifest(out) is None


@pytest.mark.parametrize("fmt", ["csv", "parquet"])
def test_tables_hashed_as_written_match_their_files(lab, tmp_path, monkeypatch, fmt):
    """The streamed tables' SHA-256 is taken from the bytes as they are written, not by reading the files
    again; each equals the hash of the file read back (FIPS 180-4 via hashlib), and a commit reads only the
    tables written whole."""
    import tracescreen.report.output_folder as of

    reread = []
    real = of.file_sha256
    monkeypatch.setattr(of, "file_sha256", lambda path, *a: reread.append(Path(path).name) or real(path, *a))
    out = tmp_path / "out"
    assert main(_screen(lab, out) + ["--format", fmt]) == 0
    record = json.loads((out / MANIFEST).read_text(encoding="utf-8"))
    assert {o["file"]: o["sha256"] for o in record["outputs"]} == \
        {o["file"]: real(out / o["file"]) for o in record["outputs"]}
    assert f"screening.{fmt}" not in reread and f"retest.{fmt}" not in reread and f"inputs.{fmt}" in reread


def test_out_naming_a_file_is_refused_before_any_work(lab, tmp_path, capsys):
    target = tmp_path / "file.txt"
    target.write_text("keep me")
    assert main(_screen(lab, target)) == 2
    err = capsys.readouterr().err
    assert "exists and is a file, not a folder" in err and "Traceback" not in err
    assert target.read_text() == "keep me"


def test_failed_write_leaves_the_earlier_run_whole_and_says_so(lab, tmp_path, capsys, monkeypatch):
    """A full disk used to leave truncated files, and a failed re-run the previous outputs beside the error."""
    out = tmp_path / "out"
    assert main(_screen(lab, out)) == 0
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    real = streams.TableStream.write
    calls = {"n": 0}

    def failing(self, frame):
        calls["n"] += 1
        if calls["n"] == 3:
            real(self, frame.head(1))  # part of a table is on disk, then the disk is full
            raise OSError(errno.ENOSPC, "No space left on device", str(self.path))
        return real(self, frame)

    monkeypatch.setattr(streams.TableStream, "write", failing)
    capsys.readouterr()
    assert main(_screen(lab, out)) == 2
    err = capsys.readouterr().err.strip()
    assert "No space left on device" in err and "no outputs were written" in err
    assert "earlier 'screen' run's outputs" in err and "Traceback" not in err
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before
    assert read_manifest(out) is not None


def test_partial_files_of_a_killed_run_are_removed_by_the_next(lab, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / ".screening.csv.partial-99999").write_text("site_id\nS1\n")
    assert main(_screen(lab, out)) == 0
    assert _partials(out) == []


def _limited(limit_bytes: int):
    def set_limit():
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit_bytes, limit_bytes))
    return set_limit


def _run_limited(argv: list[str], limit_bytes: int) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "tracescreen", *argv], capture_output=True, text=True,
                          preexec_fn=_limited(limit_bytes), env={**os.environ, "PYTHONDONTWRITEBYTECODE": "1"},
                          timeout=600)


@pytest.mark.slow
def test_screen_on_a_full_disk_is_one_line_and_writes_nothing(lab, tmp_path):
    """Files may not grow past 64 kB (as on a nearly full disk): screening.csv cannot be written."""
    out = tmp_path / "out"
    proc = _run_limited(_screen(lab, out), 64_000)
    assert proc.returncode == 2, proc.stderr[-2000:]
    assert "Traceback" not in proc.stderr and "cannot write" in proc.stderr
    assert [p.name for p in out.iterdir()] == []


@pytest.mark.slow
def test_import_on_a_full_disk_leaves_the_workspace_unchanged(tmp_path):
    ws = tmp_path / "ws"
    first = write_lab_csv(tmp_path / "first.csv", lab_rows(40))
    assert main(["import", str(first), "--workspace", str(ws)]) == 0
    size = (ws / "workspace.sqlite").stat().st_size
    big = write_lab_csv(tmp_path / "big.csv", lab_rows(60_000, seed=3, first_sample=10_000))
    proc = _run_limited(["import", str(big), "--workspace", str(ws)], size + 200_000)
    assert proc.returncode == 2, proc.stderr[-2000:]
    assert "Traceback" not in proc.stderr and "nothing was changed" in proc.stderr
    assert main(["history", "--workspace", str(ws), "--check"]) == 0
    import sqlite3

    con = sqlite3.connect(ws / "workspace.sqlite")
    assert con.execute("SELECT count(*) FROM files").fetchone()[0] == 1
    con.close()


def test_manifest_records_options(lab, tmp_path):
    out = tmp_path / "out"
    assert main(_screen(lab, out) + ["--guard-band", "1"]) == 0
    record = json.loads((out / MANIFEST).read_text())
    assert record["options"]["guard_band"] == 1.0 and record["options"]["command"] == "screen"
