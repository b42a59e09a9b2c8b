"""The workspace commands end to end on the demo scenario: import, screen --workspace, history, export."""

import hashlib
import json
import subprocess
import sys

import pandas as pd
import pyarrow.dataset as ds
import pytest
from conftest import ROOT

from tracescreen.caution import CAUTION
from tracescreen.cli import main
from tracescreen.io.sites import load_sites
from tracescreen.store.workspace import open_workspace

pytestmark = pytest.mark.slow


def _split(scenario_args):
    """Lab files, limit options, and the --sites / --columns options of the scenario."""
    files = [a for a in scenario_args if not a.startswith("--") and a.endswith((".csv", ".xlsx"))
             and "lab_results" in a]
    limits = []
    for i, a in enumerate(scenario_args):
        if a == "--limits":
            limits += ["--limits", scenario_args[i + 1]]
    opt = lambda name: scenario_args[scenario_args.index(name) + 1]  # noqa: E731
    return files, limits, opt("--sites"), opt("--columns")


def test_import_screen_history_export(tmp_path, scenario_args, capsys):
    """Import the scenario twice (second adds nothing); screen --workspace gives the same screening
    table as screening the files; the run records each limit table's SHA-256 (hashlib)."""
    files, limits, sites, columns = _split(scenario_args)
    ws = str(tmp_path / "ws")
    assert main(["import", *files, "--workspace", ws, "--columns", columns]) == 0
    out = capsys.readouterr().out
    assert "Import 1:" in out and CAUTION in out
    assert main(["import", *files, "--workspace", ws, "--columns", columns]) == 0
    out = capsys.readouterr().out
    assert "Nothing imported" in out and out.count("already imported") == len(files)

    assert main(["screen", *files, *limits, "--sites", sites, "--columns", columns,
                 "--out", str(tmp_path / "direct")]) == 0
    assert main(["screen", "--workspace", ws, *limits, "--sites", sites,
                 "--out", str(tmp_path / "via_ws")]) == 0
    capsys.readouterr()
    key = ["file", "sheet", "row", "limit_table", "entry_id"]
    direct = pd.read_csv(tmp_path / "direct" / "screening.csv").sort_values(key).reset_index(drop=True)
    via_ws = pd.read_csv(tmp_path / "via_ws" / "screening.csv").sort_values(key).reset_index(drop=True)
    pd.testing.assert_frame_equal(via_ws, direct)
    rej_direct = pd.read_csv(tmp_path / "direct" / "rejected.csv")
    rej_ws = pd.read_csv(tmp_path / "via_ws" / "rejected.csv")
    assert sorted(zip(rej_ws["file"], rej_ws["row"])) == sorted(zip(rej_direct["file"], rej_direct["row"]))

    with open_workspace(ws) as w:
        run = w.screening_runs().iloc[-1]
    recorded = {json.dumps(d, sort_keys=True) for d in json.loads(run["limits"])}
    for d in json.loads(run["limits"]):
        with open(d["path"], "rb") as fh:
            assert d["sha256"] == hashlib.sha256(fh.read()).hexdigest()
    assert len(recorded) >= 4 and run["command"] == "screen"
    with open(sites, "rb") as fh:
        assert run["sites_sha256"] == hashlib.sha256(fh.read()).hexdigest()

    assert main(["history", "--workspace", ws, "--rejected", "--check"]) == 0
    out = capsys.readouterr().out
    assert "Integrity: sound" in out and "Screening runs" in out and "Rejected rows" in out
    sample = via_ws["sample_id"].iloc[0]
    assert main(["history", "--workspace", ws, "--sample", str(sample)]) == 0
    assert "current" in capsys.readouterr().out

    assert main(["export", "--workspace", ws, "--parquet", str(tmp_path / "pq")]) == 0
    back = ds.dataset(tmp_path / "pq", format="parquet", partitioning="hive").to_table()
    with open_workspace(ws) as w:
        assert back.num_rows == len(w.current_results())


def test_workspace_user_errors_exit_2(tmp_path):
    """No workspace, files and --workspace together, no input at all: exit 2, one line, no traceback."""
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit\nS1,W1,2020-01-01,lead,total,1,ug/L\n")
    cases = [
        (["screen", "--workspace", str(tmp_path / "none"), "--limits", "limits", "--out", str(tmp_path)],
         "no workspace here"),
        (["screen", str(lab), "--workspace", str(tmp_path), "--limits", "limits", "--out", str(tmp_path)],
         "not several"),
        (["screen", "--limits", "limits", "--out", str(tmp_path)], "no lab result files given"),
        (["import", str(tmp_path / "missing.csv"), "--workspace", str(tmp_path / "ws")], "file not found"),
        (["history", "--workspace", str(tmp_path / "none")], "no workspace here"),
    ]
    for args, want in cases:
        p = subprocess.run([sys.executable, "-m", "tracescreen", *args], capture_output=True, text=True)
        assert p.returncode == 2, (args, p.stderr)
        assert "Traceback" not in p.stderr and want in p.stderr
        assert len(p.stderr.strip().splitlines()) == 1


def test_dashboard_reads_the_workspace(tmp_path, scenario_args):
    """The dashboard built on a workspace holds its current results and rejected rows; the
    `tracescreen dashboard --workspace` options reach `python -m dashboard`."""
    from dashboard.app import create_app, describe_dataset
    from dashboard.state.store import STORE_EXTENSION
    from tracescreen.cli import build_parser
    from tracescreen.cli.dashboard import to_argv

    files, limits, sites, columns = _split(scenario_args)
    ws = tmp_path / "ws"
    assert main(["import", *files, "--workspace", str(ws), "--columns", columns]) == 0
    app = create_app(limits=limits[1::2], sites=sites, workspace=ws)
    session = app.server.extensions[STORE_EXTENSION].base_session()
    with open_workspace(ws) as w:
        want = w.load_result(load_sites(sites), "sites.csv")
    assert describe_dataset(session).startswith(f"{len(want.accepted):,} results")
    assert f"{len(want.rejected):,} rows rejected" in describe_dataset(session)
    args = build_parser().parse_args(["dashboard", "--workspace", str(ws), *limits, "--sites", sites])
    assert to_argv(args)[:2] == ["--workspace", str(ws)]


def test_times_with_seconds_and_mixed_offsets_survive_the_workspace(tmp_path):
    """Issue 20: once a file with two sampling times in the same minute was imported, `screen --workspace`
    failed for the whole workspace ('Categorical categories must be unique'); offsets mixed with plain dates
    raised 'Mixed timezones detected'. Offsets are read as the local clock time (README, lab results)."""
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit\n"
                   "S1,A1,2021-03-04 10:30:15,Lead,total,5,ug/L,1\nS1,A2,2021-03-04 10:30:45,Lead,total,7,ug/L,1\n"
                   "S1,A3,2021-03-05T10:30:00+01:00,Lead,total,7,ug/L,1\nS1,A4,2021-03-06,Lead,total,7,ug/L,1\n")
    ws = tmp_path / "ws"
    assert main(["import", str(lab), "--workspace", str(ws), "--quiet"]) == 0
    out = tmp_path / "out"
    assert main(["screen", "--workspace", str(ws), "--limits", str(ROOT / "limits" / "who_gdwq_2022.yaml"), "--out", str(out),
                 "--quiet"]) == 0
    got = pd.read_csv(out / "screening.csv").sort_values("sample_id")["sampled_at"].tolist()
    assert got == ["2021-03-04 10:30:15", "2021-03-04 10:30:45", "2021-03-05 10:30:00", "2021-03-06 00:00:00"]
