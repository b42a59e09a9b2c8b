"""Workbook bombs (tests/workbook_bombs.py) on the command line and the Upload page: refused early, one line.

Issue 20: a 134 KB .xlsx upload drove the dashboard to 5.5 GB; a 68 KB file took the command line to 2.8 GB;
a 6 MB file expanding to 1.4 GB of XML was still being read after 5 minutes. The caps (io/caps.py) are
this project's rule; the file structure follows ECMA-376 (see workbook_bombs.py). Small bombs and small caps
keep these tests fast; bench/bench_hostile_input.py measures full-size bombs against the default caps.
"""

from __future__ import annotations

import base64

import pytest
from conftest import ROOT
from workbook_bombs import write_bomb

from tracescreen.cli import main
from tracescreen.io.caps import ReadCaps
from tracescreen.io.loading import LoadError, LoadOptions, load_results

LIMITS = str(ROOT / "limits" / "who_gdwq_2022.yaml")


def test_a_claimed_dimension_is_not_believed(tmp_path):
    """<dimension ref="A1:XFD1048576"> with 3 rows: read as its 2 data rows, not 17 billion cells."""
    loaded = load_results([write_bomb(tmp_path / "claimed.xlsx", "claimed")], LoadOptions(caps=ReadCaps.upload()))
    assert len(loaded.accepted) == 2


def test_a_cell_far_away_is_refused_past_the_row_cap(tmp_path):
    """One cell at XFD1048576: a reader that fills the gap holds a million rows; the Upload page's
    200,000-row cap refuses it."""
    p = write_bomb(tmp_path / "far.xlsx", "far_cell")
    assert p.stat().st_size < 5_000
    with pytest.raises(LoadError, match=r"far.xlsx \[Results\]: more than 200,000 rows") as exc:
        load_results([p], LoadOptions(caps=ReadCaps.upload()))
    assert "\n" not in str(exc.value)


def test_a_deflate_bomb_is_refused_before_it_is_read(tmp_path, capsys):
    """200,000 identical rows (about 60 MB of XML in about 260 KB): refused from the package's directory
    alone by --max-workbook-mb, with exit 2 and one line naming the option."""
    p = write_bomb(tmp_path / "deflate.xlsx", "deflate", rows=200_000)
    assert p.stat().st_size < 400_000
    rc = main(["screen", str(p), "--limits", LIMITS, "--out", str(tmp_path / "out"), "--max-workbook-mb", "20"])
    err = capsys.readouterr().err
    assert rc == 2
    assert "deflate.xlsx: the workbook expands to" in err and "--max-workbook-mb" in err
    assert "Traceback" not in err
    assert not (tmp_path / "out" / "screening.csv").exists()


def test_the_cell_cap_counts_cells_as_they_are_read(tmp_path, capsys):
    """Under the size cap, past --max-workbook-cells: refused with the option named."""
    p = write_bomb(tmp_path / "deflate.xlsx", "deflate", rows=5_000)
    rc = main(["screen", str(p), "--limits", LIMITS, "--out", str(tmp_path / "out"), "--max-workbook-cells", "20000"])
    assert rc == 2
    assert "more than 20,000 cells" in capsys.readouterr().err


def test_raising_the_caps_reads_the_same_file(tmp_path):
    """The caps refuse, they never cut: with them raised every row is read."""
    p = write_bomb(tmp_path / "deflate.xlsx", "deflate", rows=5_000)
    loaded = load_results([p], LoadOptions(caps=ReadCaps(workbook_cells=100_000)))
    assert len(loaded.accepted) == 5_000


def test_upload_page_refuses_a_deflate_bomb_by_its_expanded_size(tmp_path):
    """The Upload page's 100 MB expanded-size cap: a workbook of 600,000 rows (about 180 MB of XML) is refused
    before it is parsed."""
    pytest.importorskip("dash")
    from dashboard_support import scenario_inputs

    from dashboard.app import create_app
    from dashboard.state.store import STORE_EXTENSION
    from dashboard.views.uploads import UploadError, preview_upload

    app = create_app(inputs=scenario_inputs(), upload_dir=tmp_path / "uploads")
    store = app.server.extensions[STORE_EXTENSION]
    data = write_bomb(tmp_path / "up.xlsx", "deflate", rows=600_000).read_bytes()
    contents = "data:application/octet-stream;base64," + base64.b64encode(data).decode()
    with pytest.raises(UploadError, match="expands to .* MB of XML, more than the 100 MB"):
        preview_upload(store, contents, "up.xlsx")
