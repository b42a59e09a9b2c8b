"""Exit codes and messages, as README "Exit codes" states them: 0 the work was done (findings or
none); 2 unusable input or options, one line, no traceback; 1 only for a bug, with the request to
report it and the traceback in a log file, not on the screen."""

from __future__ import annotations

import subprocess
import sys

import pytest
from conftest import ROOT, SCENARIO

from tracescreen.cli import main

ONE_FILE = [str(SCENARIO / "lab_results_eastbank.xlsx"), "--columns", str(SCENARIO / "columns_eastbank.yaml"),
            "--limits", str(SCENARIO / "limits"), "--sites", str(SCENARIO / "sites.csv")]


def test_zero_when_results_exceed_limits(tmp_path, capsys):
    argv = [str(SCENARIO / "lab_results_fernleigh_2021-2025.csv"), "--limits", str(SCENARIO / "limits"),
            "--sites", str(SCENARIO / "sites.csv")]
    assert main(["screen", *argv, "--out", str(tmp_path)]) == 0
    assert "exceeds" in capsys.readouterr().out
    import pandas as pd

    assert (pd.read_csv(tmp_path / "screening.csv")["status"] == "exceeds").any()  # findings, still 0


@pytest.mark.parametrize("argv, message", [
    (["screen", "missing.csv", "--limits", "limits", "--out", "o"], "missing.csv: file not found"),
    (["screen", "x.csv", "--out", "o"], "the following arguments are required: --limits"),
    (["screen", "x.csv", "--limits", "limits", "--out", "o", "--near-limit", "lots"], "invalid float value: 'lots'"),
    (["screen", "x.csv", "--limits", "limits", "--out", "o", "--near-limit", "2"], "--near-limit must be in (0, 1]"),
    (["nosuchcommand"], "invalid choice: 'nosuchcommand'"),
])
def test_two_with_one_line_for_unusable_input(argv, message, tmp_path):
    p = subprocess.run([sys.executable, "-m", "tracescreen", *argv], capture_output=True, text=True, cwd=ROOT,
                       timeout=120)
    assert p.returncode == 2
    assert message in p.stderr and "Traceback" not in p.stderr
    assert p.stderr.strip().splitlines()[-1].startswith(("tracescreen: error:", "tracescreen ")), p.stderr


def test_one_for_a_bug_with_the_traceback_in_a_log_file_not_on_screen(tmp_path, monkeypatch, capsys):
    def broken(*args, **kwargs):
        raise RuntimeError("something the code did not expect")

    monkeypatch.setattr("tracescreen.pipeline.run_loaded", broken)
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    monkeypatch.delenv("TRACESCREEN_TRACEBACK", raising=False)
    assert main(["screen", *ONE_FILE, "--out", str(tmp_path / "out")]) == 1
    err = capsys.readouterr().err
    assert "Traceback" not in err
    assert "internal error: RuntimeError: something the code did not expect" in err
    assert "This is a bug in tracescreen" in err and "report it" in err
    logs = list((tmp_path / "state" / "tracescreen").glob("tracescreen-crash-*.log"))
    assert len(logs) == 1 and str(logs[0]) in err
    text = logs[0].read_text()
    assert "Traceback" in text and "RuntimeError: something the code did not expect" in text
    assert "command line: tracescreen screen" in text and "pandas" in text


def test_a_file_system_error_is_the_users_not_a_bug(tmp_path, capsys):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    assert main(["screen", *ONE_FILE, "--out", str(blocker / "out")]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "a-file" in err and "bug" not in err


def test_130_when_interrupted_with_one_line_and_no_bug_report(tmp_path, monkeypatch, capsys):
    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt  # what Ctrl+C raises in the running command

    monkeypatch.setattr("tracescreen.pipeline.run_loaded", interrupted)
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    assert main(["screen", *ONE_FILE, "--out", str(tmp_path / "out")]) == 130  # 128 + SIGINT, common practice
    err = capsys.readouterr().err
    assert err.strip().splitlines()[-1] == "tracescreen: interrupted" and "Traceback" not in err
    assert not (tmp_path / "state").exists()  # not a bug: no crash log
    assert not (tmp_path / "out" / "screening.csv").exists()  # nothing half-written in place
