"""Progress of long work: the pipeline's stages reach a callback; the command line draws them on a
terminal only (stderr a pseudo-terminal here), never into a pipe or with --quiet.

What is checked is the behaviour README "Progress and quiet runs" promises (stages, rows done, a
one-line summary; silent off a terminal), on the demo scenario; no outside value is involved.
"""

from __future__ import annotations

import os
import pty
import re
import select
import subprocess
import sys

from conftest import ROOT, SCENARIO

from tracescreen import pipeline
from tracescreen.progress import STAGES, Step, report, reporting

ONE_FILE = [str(SCENARIO / "lab_results_eastbank.xlsx"), "--columns", str(SCENARIO / "columns_eastbank.yaml"),
            "--limits", str(SCENARIO / "limits"), "--sites", str(SCENARIO / "sites.csv")]
ANSI = re.compile(r"\x1b\[[0-9;?]*[A-Za-z]")


def _run(args: list[str], tty: bool, delay: str = "0") -> tuple[int, str, str]:
    """Run ``tracescreen ARGS`` with stderr on a pseudo-terminal (``tty``) or a pipe: code, stdout, stderr."""
    env = dict(os.environ, TRACESCREEN_PROGRESS_DELAY=delay, TERM="xterm", COLUMNS="140")
    cmd = [sys.executable, "-m", "tracescreen", *args]
    if not tty:
        p = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=ROOT, timeout=300)
        return p.returncode, p.stdout, p.stderr
    master, slave = pty.openpty()
    p = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=slave, env=env, cwd=ROOT)
    os.close(slave)
    err = b""
    while True:  # read the terminal until the process has closed it
        ready, _, _ = select.select([master], [], [], 0.2)
        if ready:
            try:
                chunk = os.read(master, 65536)
            except OSError:  # the other end closed
                break
            if not chunk:
                break
            err += chunk
        elif p.poll() is not None:
            break
    out = p.stdout.read().decode()
    os.close(master)
    return p.wait(timeout=60), out, ANSI.sub("", err.decode("utf-8", "replace"))


def test_the_pipeline_reports_each_stage_in_order_with_rows_done():
    from conftest import demo_inputs

    steps: list[Step] = []
    res = pipeline.run(demo_inputs(), progress=steps.append)
    stages = list(dict.fromkeys(s.stage for s in steps))
    # the run goes part by part (whole sites): the laboratory QC review judges whole batches first, then
    # each part is screened, summarised and given its retest list under one "screen" stage
    assert stages == ["read", "lab_qc", "screen"]
    assert [s.stage for s in steps if s.finished] == stages  # each stage ends once
    read = [s for s in steps if s.stage == "read"]
    assert read[-1].done == read[-1].total == len(demo_inputs().results) and read[-1].unit == "files"
    screened = [s for s in steps if s.stage == "screen"]
    assert screened[0].done == 0 and screened[-1].done == screened[-1].total == len(res.loaded.accepted)
    assert all(s.label == STAGES[s.stage] for s in steps)


def test_screening_in_parts_reports_rows_as_each_part_is_done():
    from conftest import demo_inputs

    steps: list[Step] = []
    data = pipeline.load(demo_inputs())
    n = len(data.loaded.accepted)
    with reporting(steps.append):
        pipeline.screen(data.loaded.accepted, data.limits, data.sites, pipeline.Options(part_rows=2000))
    done = [s.done for s in steps if s.stage == "screen"]
    assert done[0] == 0 and done[-1] == n and len(done) > 3 and done == sorted(done)


def test_no_callback_no_reports_and_blocks_restore_the_outer_callback():
    outer, inner = [], []
    report("screen", 1, 2)  # nothing receives it: no error
    with reporting(outer.append):
        with reporting(inner.append):
            report("read", 1, 1)
        with reporting(None):  # None keeps the outer one
            report("screen", 1, 1)
    assert [s.stage for s in inner] == ["read"] and [s.stage for s in outer] == ["screen"]


def test_progress_is_drawn_on_a_terminal_with_stages_rows_and_a_summary(tmp_path):
    code, out, err = _run(["screen", *ONE_FILE, "--out", str(tmp_path)], tty=True)
    assert code == 0, err
    for label in ("reading files", "screening", "statistics", "retest list", "writing outputs"):
        assert label in err
    accepted = int(re.search(r"accepted: (\d+)", out).group(1))
    assert f"{accepted:,}/{accepted:,} rows" in err  # rows done of the total
    assert re.search(r"tracescreen screen: done in [\d.]+ s \(reading files [\d.]+ s, .*screening [\d.]+ s", err)
    assert out.startswith("Rows read:")  # the summary on stdout is unchanged


def test_no_progress_when_stderr_is_not_a_terminal(tmp_path):
    code, out, err = _run(["screen", *ONE_FILE, "--out", str(tmp_path)], tty=False)
    assert code == 0
    assert "screening" not in err and "done in" not in err and "\x1b[" not in err
    assert out.startswith("Rows read:")


def test_quiet_turns_progress_off_on_a_terminal(tmp_path):
    code, _, err = _run(["screen", *ONE_FILE, "--out", str(tmp_path), "--quiet"], tty=True)
    assert code == 0 and "screening" not in err and "done in" not in err


def test_quick_work_shows_nothing_before_the_delay(tmp_path):
    code, _, err = _run(["trends", *ONE_FILE, "--out", str(tmp_path)], tty=True, delay="600")
    assert code == 0 and "screening" not in err and "done in" not in err


def test_import_shows_reading_and_storing_on_a_terminal_and_nothing_in_a_pipe(tmp_path):
    lab = str(SCENARIO / "lab_results_fernleigh_2021-2025.csv")
    code, out, err = _run(["import", lab, "--workspace", str(tmp_path / "ws")], tty=True)
    assert code == 0, err
    assert "reading files" in err and "storing in the workspace" in err and "1/1 files" in err
    assert re.search(r"tracescreen import: done in [\d.]+ s \(reading files [\d.]+ s, storing", err)
    code, out2, err = _run(["import", lab, "--workspace", str(tmp_path / "ws2")], tty=False)
    assert code == 0 and "storing" not in err and "done in" not in err and "\x1b[" not in err
    assert out2 == out.replace(str(tmp_path / "ws"), str(tmp_path / "ws2"))  # stdout the same either way
