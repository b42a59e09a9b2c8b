"""An import killed with SIGKILL leaves the workspace as it was; a reader sees before or after.

The guarantees under test are SQLite's atomic commit and write-ahead-log snapshot isolation
(https://www.sqlite.org/atomiccommit.html, https://www.sqlite.org/wal.html); the tests check
that the workspace uses them so that a whole import is one transaction.
"""

import shutil
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pandas as pd
import pytest
from workspace_support import assert_same_state, lab_rows, snapshot, write_lab_csv

from tracescreen.store.workspace import open_workspace

IMPORTER = Path(__file__).with_name("workspace_importer.py")
pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    """A workspace holding one report, and a large file that revises 400 of its rows and adds 19,600."""
    root = tmp_path_factory.mktemp("crash")
    first_rows = lab_rows(2000, seed=1)
    first = write_lab_csv(root / "first.csv", first_rows)
    big_rows = pd.concat([first_rows.iloc[:400].assign(result="123.4"),
                          lab_rows(19_600, seed=2, first_sample=10_000)], ignore_index=True)
    big = write_lab_csv(root / "big.csv", big_rows)
    pristine = root / "pristine"
    with open_workspace(pristine, create=True) as ws:
        ws.import_files([first])
    return root, pristine, big, snapshot(pristine)


def _child(ws: Path, big: Path, *extra: str) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, str(IMPORTER), str(ws), str(big), *extra],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def _state_after_complete_import(root, pristine, big):
    done = root / "complete"
    if not done.exists():
        shutil.copytree(pristine, done)
        p = _child(done, big)
        out, err = p.communicate(timeout=300)
        assert p.returncode == 0, err
    return snapshot(done)


def _same_content(a, b) -> bool:
    """Same imports, files and results (ignoring the times and paths of the import itself)."""
    cols = ["import_id", "files", "rows_read", "rows_new", "rows_revised", "rows_superseded"]
    try:
        pd.testing.assert_frame_equal(a["imports"][cols], b["imports"][cols])
        pd.testing.assert_frame_equal(a["current"], b["current"])
        pd.testing.assert_frame_equal(a["history"].drop(columns="imported_at"),
                                      b["history"].drop(columns="imported_at"))
    except AssertionError:
        return False
    return True


@pytest.mark.parametrize("kill_at", ["reading", "transaction begun", "stored a segment:1",
                                     "stored a segment:7", "committing"])
def test_sigkill_inside_import_leaves_exact_prior_state(setup, kill_at, tmp_path):
    """SIGKILL before, at the start of, midway through and just before the commit of an import:
    the workspace opens, passes the integrity check and equals its state before the import."""
    root, pristine, big, before = setup
    ws = tmp_path / "ws"
    shutil.copytree(pristine, ws)
    p = _child(ws, big, "--kill-at", kill_at)
    out, err = p.communicate(timeout=300)
    assert p.returncode == -signal.SIGKILL, (out, err)
    assert kill_at.split(":")[0] in out.splitlines()[-1]
    with open_workspace(ws) as w:
        assert w.check() == []
    assert_same_state(before, snapshot(ws))
    if kill_at == "stored a segment:7":
        # the interrupted import can simply be run again, and then lands whole
        p = _child(ws, big)
        out, err = p.communicate(timeout=300)
        assert p.returncode == 0, err
        assert "19600 new, 0 unchanged, 400 revised (superseding 400 earlier)" in out
        assert _same_content(snapshot(ws), _state_after_complete_import(root, pristine, big))


@pytest.mark.parametrize("delay", [0.0, 0.05, 0.2, 0.5, 0.7, 1.5])
def test_sigkill_at_arbitrary_moments(setup, delay, tmp_path):
    """SIGKILL at timed moments after the transaction begins (possibly during or after COMMIT):
    the workspace is sound and holds either the state before or the complete import, never a part."""
    root, pristine, big, before = setup
    ws = tmp_path / "ws"
    shutil.copytree(pristine, ws)
    p = _child(ws, big)
    for line in p.stdout:
        if "transaction begun" in line:
            break
    time.sleep(delay)
    p.send_signal(signal.SIGKILL)
    p.communicate(timeout=300)
    with open_workspace(ws) as w:
        assert w.check() == []
    now = snapshot(ws)
    if len(now["imports"]) == 1:
        assert_same_state(before, now)
    else:
        assert _same_content(now, _state_after_complete_import(root, pristine, big))


def test_reader_sees_before_or_after_never_half(setup, tmp_path):
    """A reader polling during a slow import sees only the before or after state; it is not blocked."""
    root, pristine, big, before = setup
    ws = tmp_path / "ws"
    shutil.copytree(pristine, ws)
    after = _state_after_complete_import(root, pristine, big)
    sig = {"before": (len(before["current"]), len(before["imports"])),
           "after": (len(after["current"]), len(after["imports"]))}
    p = _child(ws, big, "--pause", "0.05")
    lines: list[tuple[float, str]] = []
    reader = threading.Thread(target=lambda: lines.extend(
        (time.monotonic(), ln) for ln in p.stdout))
    reader.start()
    seen = []
    with open_workspace(ws) as w:
        while p.poll() is None:
            with w.reading():
                state = (len(w.current_results()), len(w.imports()))
                n_superseded = int(w.results_history()["superseded_by"].notna().sum())
            seen.append((time.monotonic(), state, n_superseded))
        reader.join()
        assert p.returncode == 0
        seen.append((time.monotonic(), (len(w.current_results()), len(w.imports())), 400))
    begun = next(t for t, ln in lines if "transaction begun" in ln)
    committing = next(t for t, ln in lines if "committing" in ln)
    for _, state, n_sup in seen:
        assert state in sig.values()
        assert n_sup == (0 if state == sig["before"] else 400)
    during = [s for t, s, _ in seen if begun < t < committing]
    assert len(during) >= 3 and set(during) == {sig["before"]}
    assert seen[-1][1] == sig["after"]
