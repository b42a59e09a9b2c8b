import re

"""The command line end to end on the demo scenario, and its handling of user errors."""

import subprocess
import sys

import pandas as pd
import pytest

from tracescreen.caution import CAUTION
from tracescreen.cli import COMMANDS, main


def test_screen_scenario_end_to_end(tmp_path, scenario_args, capsys):
    """Screen the demo scenario: exit 0, outputs written, rows read = accepted + set aside + rejected (project rule)."""
    code = main(["screen", *scenario_args, "--out", str(tmp_path)])
    out = capsys.readouterr().out
    assert code == 0
    screening = pd.read_csv(tmp_path / "screening.csv")
    rejected = pd.read_csv(tmp_path / "rejected.csv")
    line = next(ln for ln in out.splitlines() if ln.startswith("Rows read:"))
    read, acc, aside, rej = (int(x) for x in re.findall(r"\d+", line)[:4])
    assert read == acc + aside + rej and rej == len(rejected) > 0
    assert aside == len(pd.read_csv(tmp_path / "not_screened.csv"))
    # every accepted result appears in screening.csv at least once
    assert screening.drop_duplicates(["file", "sheet", "row"]).shape[0] == acc
    assert set(screening["status"]) >= {"exceeds", "meets", "nondetect_meets", "qc_sample"}
    assert rejected["reason"].str.contains("not in sites.csv").any()
    assert CAUTION in out


def test_python_dash_m_entry_point(tmp_path):
    """`python -m tracescreen --help` works and shows the caution."""
    p = subprocess.run([sys.executable, "-m", "tracescreen", "--help"], capture_output=True, text=True)
    assert p.returncode == 0 and "screening aid" in p.stdout.lower().replace("\n", " ")


@pytest.mark.parametrize("command", COMMANDS)
def test_every_command_has_help(command, capsys):
    """Every sub-command answers --help (module ``import_`` is the command ``import``)."""
    with pytest.raises(SystemExit) as exc:
        main([command.rstrip("_"), "--help"])
    assert exc.value.code == 0 and "usage" in capsys.readouterr().out


def test_user_errors_exit_2_without_traceback(tmp_path, scenario_args):
    """Missing file, unrecognisable columns, invalid limit table: exit 2 and one line, no traceback."""
    junk = tmp_path / "junk.csv"
    junk.write_text("a,b,c\n1,2,3\n")
    bad_table = tmp_path / "bad.yaml"
    bad_table.write_text("id: x\nname: y\nuse: z\nunit: mg/L\nentries: []\n")
    lim = ["--limits", str(bad_table)]
    cases = [
        ["screen", str(tmp_path / "missing.csv"), "--limits", "limits", "--out", str(tmp_path)],
        ["screen", str(junk), "--limits", "scenario_data/limits", "--out", str(tmp_path)],
        ["screen", scenario_args[0], *lim, "--out", str(tmp_path)],
    ]
    expected = ["missing.csv: file not found", "junk.csv: no recognisable columns", "missing citation"]
    for args, want in zip(cases, expected):
        p = subprocess.run([sys.executable, "-m", "tracescreen", *args], capture_output=True, text=True)
        assert p.returncode == 2, p.stderr
        assert "Traceback" not in p.stderr and want in p.stderr
        assert len(p.stderr.strip().splitlines()) == 1


def test_a_run_with_no_accepted_rows_still_succeeds(tmp_path, capsys):
    """A file whose only row is rejected: screen, trends and report exit 0 with empty tables (no traceback)."""
    f = tmp_path / "one_bad_row.csv"
    f.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit\nS1,A,2021-13-40,Lead,total,1,ug/L\n")
    assert main(["screen", str(f), "--limits", "limits", "--out", str(tmp_path / "s")]) == 0
    assert main(["trends", str(f), "--limits", "limits", "--out", str(tmp_path / "t")]) == 0
    assert main(["report", str(f), "--limits", "limits", "--out", str(tmp_path / "r.html")]) == 0
    assert len(pd.read_csv(tmp_path / "s" / "rejected.csv")) == 1
