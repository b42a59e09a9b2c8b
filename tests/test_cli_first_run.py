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
