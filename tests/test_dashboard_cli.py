"""`tracescreen dashboard` and `python -m dashboard`: options, user errors, and a real start."""

from __future__ import annotations

import socket
import subprocess
import sys
import time
import urllib.request

import pytest
from dashboard_support import ROOT, scenario_paths

from tracescreen.cli import build_parser
from tracescreen.cli.dashboard import result_files, to_argv


def test_options_forwarded_to_the_dashboard_process():
    """Every reading option given to `tracescreen dashboard` reaches `python -m dashboard` unchanged."""
    args = build_parser().parse_args(
        ["dashboard", "a.csv", "--results", "b.xlsx", "--limits", "L1", "--limits", "L2", "--sites", "s.csv",
         "--columns", "c.yaml", "--date-order", "dmy", "--decimal-comma", "--same-fraction-only", "--port", "9000",
         "--overlay", "catchment.geojson", "--overlay", "rivers.geojson"])
    assert result_files(args) == ["a.csv", "b.xlsx"]
    argv = to_argv(args)
    from dashboard.__main__ import build_parser as dash_parser

    again = dash_parser().parse_args(argv)
    for name in ("limits", "sites", "columns", "date_order", "decimal_comma", "cross_fraction", "port", "host",
                 "debug", "overlay"):
        assert getattr(again, name) == getattr(args, name), name
    assert result_files(again) == ["a.csv", "b.xlsx"]
    assert args.host == "127.0.0.1" and not args.debug  # local only and no debug unless asked
    assert args.cross_fraction is False and dash_parser().parse_args(to_argv(build_parser().parse_args(
        ["dashboard", "a.csv", "--limits", "L"]))).cross_fraction is True


def test_same_fraction_only_reaches_the_dashboards_screening(monkeypatch):
    """`python -m dashboard --same-fraction-only` screens as `tracescreen screen --same-fraction-only` does:
    the option reaches create_app and the session's screening (reference: the engine's own screen with
    cross_fraction=False on the same results)."""
    from dashboard_support import scenario_inputs

    import dashboard.__main__ as entry
    from dashboard.state.session import build_session
    from tracescreen.screening.screen import screen

    seen = {}

    def create_app(*args, **kwargs):  # records what the entry point passes, then stops it (exit code 2)
        seen.update(kwargs)
        raise OSError("stopped by the test")

    monkeypatch.setattr("dashboard.app.create_app", create_app)
    p = scenario_paths()
    assert entry.main(["--results", str(p["results"][0]), "--limits", str(p["limits"][0]), "--same-fraction-only"]) == 2
    assert seen["cross_fraction"] is False
    def crossed(frame):  # rows decided against a limit of the other fraction
        lf, fr = frame["limit_fraction"].astype(object), frame["fraction"].astype(object)
        return int((lf.notna() & (lf != "") & (lf != fr)).sum())

    for cross in (True, False):
        inputs = scenario_inputs()
        inputs.cross_fraction = cross
        engine = screen(inputs.accepted, inputs.limits, inputs.sites, cross_fraction=cross)
        session = build_session(inputs)
        assert len(session.screened) == len(engine) and crossed(session.screened) == crossed(engine)
        assert (crossed(engine) > 0) == cross


def test_missing_file_is_a_one_line_error(tmp_path):
    """A missing results file ends with exit code 2 and one line, no traceback (README.md#dashboard; common practice for command-line tools)."""
    proc = subprocess.run([sys.executable, "-m", "dashboard", "--results", str(tmp_path / "missing.csv"),
                           "--limits", str(ROOT / "limits")], capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert proc.returncode == 2
    lines = [ln for ln in proc.stderr.splitlines() if ln.startswith("tracescreen")]
    assert len(lines) == 1 and "missing.csv" in lines[0]
    assert "Traceback" not in proc.stderr


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.mark.slow
def test_tracescreen_dashboard_serves_the_scenario_on_localhost():
    """`tracescreen dashboard` on the scenario answers on 127.0.0.1 with the app page."""
    p = scenario_paths()
    port = _free_port()
    cmd = [str(ROOT / ".venv" / "bin" / "tracescreen"), "dashboard", *map(str, p["results"]),
           "--sites", str(p["sites"]), "--columns", str(p["columns"]), "--port", str(port)]
    for lim in p["limits"]:
        cmd += ["--limits", str(lim)]
    if not (ROOT / ".venv" / "bin" / "tracescreen").exists():
        cmd[0:2] = [sys.executable, "-m", "tracescreen", "dashboard"]
    proc = subprocess.Popen(cmd, cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 120
        while True:
            assert proc.poll() is None, proc.stderr.read().decode()[-2000:]
            try:
                page = urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=2).read().decode()
                break
            except OSError:
                assert time.monotonic() < deadline, "dashboard did not start within 120 s"
                time.sleep(0.5)
        assert "tracescreen" in page and "_dash-config" in page
    finally:
        proc.terminate()
        proc.wait(10)


def test_bad_overlay_is_a_one_line_error(tmp_path):
    """A map overlay that is not GeoJSON stops the start with a message naming the file (exit 2, no traceback)."""
    bad = tmp_path / "rivers.geojson"
    bad.write_text("not json")
    p = scenario_paths()
    cmd = [sys.executable, "-m", "dashboard", "--results", str(p["results"][0]), "--limits", str(p["limits"][0]),
           "--overlay", str(bad)]
    out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 2 and "rivers.geojson: not a GeoJSON file" in out.stderr
    assert "Traceback" not in out.stderr


def test_make_run_serves_on_port_and_host_variables():
    """`make run PORT=... HOST=...` passes both to the dashboard (make -n shows the command without running it)."""
    out = subprocess.run(["make", "-n", "run", "PORT=8123", "HOST=0.0.0.0"], cwd=ROOT, capture_output=True, text=True,
                         timeout=60)
    assert "--host 0.0.0.0 --port 8123" in out.stdout


def test_every_option_of_tracescreen_dashboard_reaches_python_m_dashboard():
    """Each option `tracescreen dashboard --help` lists, set away from its default (so a value taken from
    tracescreen.yaml counts too), arrives in `python -m dashboard` with the same value: none is dropped."""
    import argparse

    from dashboard.__main__ import build_parser as dash_parser

    sub = build_parser()._subparsers._group_actions[0].choices["dashboard"]
    argv = ["dashboard", "a.csv"]
    general = {"help", "config", "no_config"}
    for action in sub._actions:
        if not action.option_strings or action.dest in general:
            continue
        flag = action.option_strings[-1] if action.option_strings[-1].startswith("--") else action.option_strings[0]
        if isinstance(action, (argparse._StoreTrueAction, argparse._StoreFalseAction)):
            argv.append(flag)
        elif action.choices:
            argv += [flag, next(c for c in action.choices if c != action.default)]
        elif action.type in (int, float):
            argv += [flag, str(action.type(7))]
        elif isinstance(action, argparse._AppendAction):
            argv += [flag, f"{action.dest}-1", flag, f"{action.dest}-2"]
        elif action.dest == "earliest_date":
            argv += [flag, "1950-01-01"]
        elif action.dest != "workspace":  # lab files are given; a workspace is the other source
            argv += [flag, f"{action.dest}-x"]
    args = build_parser().parse_args(argv)
    again = dash_parser().parse_args(to_argv(args))
    for dest, value in vars(args).items():
        if dest in general | {"func", "command", "results_required", "results", "results_option"}:
            continue
        assert getattr(again, dest) == value, dest
    assert result_files(again) == result_files(args) == ["a.csv", "results_option-x"]
    assert again.quiet and not hasattr(args, "dataset")  # the dashboard reads files or a workspace only
