"""A first run on a real lab file: the summary says what stopped rows, so the user knows what to fix.

File: ``tests/data/wqp_narrowresult_orsanco_nps_2024_metals.csv``, a Water Quality Portal narrowResult
download (origin in tests/data/README.md); its dates are written month/day/year, as WQP downloads
write them.
"""

from __future__ import annotations

import re

from conftest import ROOT

from tracescreen.cli import main

WQP = str(ROOT / "tests" / "data" / "wqp_narrowresult_orsanco_nps_2024_metals.csv")


def _counts(out: str) -> tuple[int, int]:
    accepted, rejected = re.search(r"accepted: (\d+) .* rejected: (\d+)", out).groups()
    return int(accepted), int(rejected)


def test_the_summary_names_the_commonest_problems_and_the_option_that_fixes_them(tmp_path, capsys):
    assert main(["screen", WQP, "--limits", str(ROOT / "limits"), "--out", str(tmp_path / "a")]) == 0
    out = capsys.readouterr().out
    lines = out.split("Most common problems of the rejected rows", 1)[1].splitlines()[1:6]
    first = lines[0].split(None, 1)
    assert int(first[0]) == _counts(out)[1]  # every rejected row has this problem
    assert "sampled_at '...' is not a date" in first[1] and "--date-order dmy or mdy" in first[1]

    assert main(["screen", WQP, "--limits", str(ROOT / "limits"), "--date-order", "mdy",
                 "--out", str(tmp_path / "b")]) == 0
    out2 = capsys.readouterr().out
    assert _counts(out2)[0] > _counts(out)[0] == 0
    assert "is not a date" not in out2


# ---- README "First run on real files": the lines a newcomer pastes, run as written -------------------

DATA = ROOT / "tests" / "data"


def _first_run_lines() -> list[list[str]]:
    """The commands of README "First run on real files" (its bash block), comments and `source` left out."""
    import shlex

    section = (ROOT / "README.md").read_text(encoding="utf-8").split("## First run on real files", 1)[1]
    block = section.split("```bash\n", 1)[1].split("```", 1)[0]
    lines = [shlex.split(line, comments=True) for line in block.splitlines()]
    return [words for words in lines if words and words[0] != "source"]


def _summary_line(out: str, name: str) -> str:
    return next(line.strip() for line in out.splitlines() if line.strip().startswith(f"{name}:"))


def test_the_readme_first_run_lines_run_as_written(tmp_path, monkeypatch, capsys):
    import csv

    import pandas as pd
    import pytest

    (tmp_path / "tests").mkdir()
    (tmp_path / "tests" / "data").symlink_to(DATA)
    (tmp_path / "limits").symlink_to(ROOT / "limits")
    monkeypatch.chdir(tmp_path)
    lines = _first_run_lines()
    assert [w[:2] for w in lines] == [["tracescreen", "--help"]] + [["tracescreen", "screen"]] * 3
    with pytest.raises(SystemExit) as exc:
        main(lines[0][1:])
    assert exc.value.code == 0 and "CAUTION" in capsys.readouterr().out
    outs = []
    for words in lines[1:]:
        assert main(words[1:]) == 0, words
        out = capsys.readouterr().out
        outs.append(out)
        folder = tmp_path / words[words.index("--out") + 1]
        assert (folder / "screening.csv").is_file() and "CAUTION" in out

    # the portal file (tests/data/README.md: narrowResult has no DetectionQuantitationLimit columns):
    # every rejected row is one whose ResultMeasureValue is empty, i.e. a non-detect or an unquantified
    # detection with no limit to censor it at; no row is rejected for its dates once mdy is given
    rejected = pd.read_csv(tmp_path / "out/first/wqp/rejected.csv", dtype=str)
    assert len(rejected) and rejected["ResultMeasureValue"].isna().all()
    assert rejected["reason"].str.contains("non-detect without a detection limit|detected but not quantified").all()
    assert "is not a date" not in outs[0]

    # the lab deliverable: part 2 has 45 data lines (counted here with the csv module); README "Worked
    # example: a laboratory deliverable" gives 26 accepted and 19 set aside (17 lab QC rows, 2 nutrients)
    with open(DATA / "lab_edd_kenai_sgs_1231846_rev1_part2_extract.csv", newline="", encoding="utf-8") as f:
        n = sum(1 for _ in csv.reader(f)) - 1
    assert _summary_line(outs[1], "lab_edd_kenai_sgs_1231846_rev1_part2_extract.csv") == (
        f"lab_edd_kenai_sgs_1231846_rev1_part2_extract.csv: {n} read, 26 accepted, 19 set aside, 0 rejected")

    # the USGS Samples extract (tests/data/README.md): discharge, pH, E. coli, nitrate plus nitrite and
    # two ammonia lines, no metal: all six set aside, the pH as an input of computed limits
    kinds = outs[2].split("Rows set aside, not screened, by kind", 1)[1].splitlines()[1:3]
    assert [k.split(None, 1) for k in kinds] == [
        ["5", "analyte '...' is not in the analyte registry (not screened by tracescreen)"],
        ["1", "pH result: used as an input of the sample's computed limits"]]
    assert "accepted: 0  set aside (not screened): 6  rejected: 0" in outs[2]


def test_a_folder_given_as_a_lab_file_is_named_as_a_folder(tmp_path, capsys):
    for command in (["screen", str(tmp_path), "--limits", str(ROOT / "limits"), "--out", str(tmp_path / "o")],
                    ["import", str(tmp_path), "--workspace", str(tmp_path / "ws")]):
        assert main(command) == 2
        err = capsys.readouterr().err.strip()
        assert len(err.splitlines()) == 1 and "a folder, not a lab file: give the files in it" in err, err
