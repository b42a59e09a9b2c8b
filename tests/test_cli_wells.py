"""`tracescreen wells` end to end, and the network and design files (clear messages, never a
traceback). Check values here come from the Unified Guidance's Example 19-1 (tests/data/usepa2009)."""

import pandas as pd
import pytest
from lab_files import write_csv
from usepa2009_examples import example

from tracescreen.caution import CAUTION
from tracescreen.cli import main
from tracescreen.cli.wells import FILES
from tracescreen.io.network import NetworkError, read_design, read_network


def _example_19_1_files(tmp_path):
    """Example 19-1's background (four wells) as a lab file, a compliance well with two results,
    a network and a design file (constituents 10, wells 50, 2 evaluations, 1-of-3). The values
    are the example's sulfate in mg/L, filed under barium, an analyte of the registry (the
    statistics do not depend on the name)."""
    ex = example("19_1_sulfate")
    lines = ["Site,Sample ID,Sample Date,Parameter,Fraction,Result,Units,LOR,Sample Type,Parent Sample"]
    for k, (well, date, v) in enumerate(ex["rows"]):
        lines.append(f"{well},S{k},{date},Barium,Total,{v},mg/L,1,Normal,")
    lines += ["CW-1,C1,2004-02-01,Barium,Total,170,mg/L,1,Normal,",
              "CW-1,C2,2004-03-01,Barium,Total,120,mg/L,1,Normal,"]
    lab = write_csv(tmp_path, "\n".join(lines) + "\n")
    net = tmp_path / "network.csv"
    net.write_text("site_id,role,well_group\nGW-01,background,north\nGW-04,upgradient,north\n"
                   "GW-08,background,north\nGW-09,background,north\nCW-1,compliance,north\n", encoding="utf-8")
    design = tmp_path / "design.yaml"
    design.write_text("constituents: 10\ncompliance_wells: 50\nevaluations_per_year: 2\nplan: 1-of-3\n"
                      "comparison: interwell\n", encoding="utf-8")
    return lab, net, design


def test_wells_command_writes_every_table(tmp_path, capsys):
    """Every method's table is written with the design recorded; Example 19-1's limit 159.55 mg/L
    (lognormal, 1-of-3): the first compliance value 170 is an initial exceedance, 120 does not
    confirm it."""
    lab, net, design = _example_19_1_files(tmp_path)
    assert main(["wells", str(lab), "--network", str(net), "--design", str(design),
                 "--out", str(tmp_path / "o")]) == 0
    out = capsys.readouterr().out
    assert CAUTION in out and "per-test confidence 0.999789" in out
    for name in FILES.values():
        assert (tmp_path / "o" / name).exists()
    lim = pd.read_csv(tmp_path / "o" / "prediction_limits.csv").iloc[0]
    assert lim["limit_ug_L"] == pytest.approx(159549.6, abs=5)      # 159.5496 mg/L in µg/L
    seq = pd.read_csv(tmp_path / "o" / "retest_sequence.csv")
    assert list(seq["status"]) == ["initial_exceedance", "not_confirmed"]
    d = pd.read_csv(tmp_path / "o" / "design.csv").set_index("setting")["value"]
    assert d["plan"] == "1-of-3" and d["constituents_in_design"] == "10"


def test_wells_command_options_override_the_design_file(tmp_path, capsys):
    """--plan on the command line wins over the design file (1-of-2 gives a higher limit)."""
    lab, net, design = _example_19_1_files(tmp_path)
    assert main(["wells", str(lab), "--network", str(net), "--design", str(design), "--plan", "1-of-2",
                 "--out", str(tmp_path / "o")]) == 0
    lim = pd.read_csv(tmp_path / "o" / "prediction_limits.csv").iloc[0]
    assert lim["plan"] == "1-of-2" and lim["kappa"] == pytest.approx(2.773504, abs=2e-5)


@pytest.mark.parametrize("content,message", [
    ("site_id,role\nW1,upstream\n", "row 2: role 'upstream' is not background or compliance"),
    ("site_id\nW1\n", "missing column(s) role"),
    ("site_id,role,background_to\nW1,background,31/12/2019\n", "row 2: background_to '31/12/2019' is not an ISO date"),
    ("site_id,role,stage\nW1,compliance,cleanup\n", "row 2: stage 'cleanup' is not one of detection, assessment"),
])
def test_network_file_errors_name_file_row_and_problem(tmp_path, content, message):
    p = tmp_path / "net.csv"
    p.write_text(content, encoding="utf-8")
    with pytest.raises(NetworkError, match="net.csv"):
        read_network(p)
    with pytest.raises(NetworkError) as err:
        read_network(p)
    assert message in str(err.value)


def test_bad_design_and_missing_network_end_with_one_line(tmp_path, capsys):
    lab, net, design = _example_19_1_files(tmp_path)
    bad = tmp_path / "bad.yaml"
    bad.write_text("swfpr: 0.1\nplans: 1-of-2\n", encoding="utf-8")
    with pytest.raises(NetworkError, match="'plans' is not a design key"):
        read_design(bad)
    assert main(["wells", str(lab), "--design", str(bad), "--network", str(net), "--out", str(tmp_path / "o")]) == 2
    assert main(["wells", str(lab), "--out", str(tmp_path / "o")]) == 2
    assert main(["wells", str(lab), "--network", str(net), "--plan", "2-of-1", "--out", str(tmp_path / "o")]) == 2
    assert main(["wells", str(lab), "--network", str(net), "--swfpr", "1.5", "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    lines = [ln for ln in err.splitlines() if ln.startswith("tracescreen: error:")]
    assert len(lines) == 4 and "Traceback" not in err
    assert "give --network" in lines[1] and "swfpr 1.5 is not between 0 and 1" in lines[3]


def test_wells_on_the_demo_scenario(tmp_path, capsys):
    """The invented demo well field: Ashby bores compared with the Coldharbour bore."""
    assert main(["wells", "scenario_data/lab_results_eastbank.xlsx", "--columns", "scenario_data/columns_eastbank.yaml",
                 "--sites", "scenario_data/sites.csv", "--network", "scenario_data/network.csv",
                 "--design", "scenario_data/design.yaml", "--limits", "limits", "--out", str(tmp_path / "o")]) == 0
    status = pd.read_csv(tmp_path / "o" / "well_status.csv")
    assert set(status["site_id"]) == {"BH01", "BH02"}
    ci = pd.read_csv(tmp_path / "o" / "confidence_limits.csv")
    assert len(ci) and set(ci["decision"]) <= {"exceeds", "not_shown_to_exceed", "meets", "not_shown_to_meet"}


def test_network_constituent_windows(tmp_path):
    """A row naming an analyte (by name or symbol) sets that constituent's window at the well; the
    well keeps its role and group; an unknown analyte or a window for a well without its own row is
    named with its row."""
    p = tmp_path / "net.csv"
    p.write_text("site_id,role,well_group,background_to,analyte\nW1,compliance,g,2019-12-31,\n"
                 "W1,,,2017-06-30,As\n", encoding="utf-8")
    net = read_network(p)
    assert list(net["analyte"]) == ["", "arsenic"]
    assert net.loc[1, "background_to"] == pd.Timestamp("2017-06-30")
    p.write_text("site_id,role,analyte\nW1,compliance,\nW1,,unobtainium\n", encoding="utf-8")
    with pytest.raises(NetworkError, match="row 3: analyte 'unobtainium' is not in the analyte registry"):
        read_network(p)
    p.write_text("site_id,role,analyte\nW1,compliance,\nW2,,arsenic\n", encoding="utf-8")
    with pytest.raises(NetworkError, match="row 3: window for arsenic at 'W2', but 'W2' has no row"):
        read_network(p)


def test_report_states_the_statistical_design_and_draws_wells_needing_attention(tmp_path, capsys):
    """`report --network --design` adds the wells section: the design statement first (SWFPR,
    plan, kappa, non-detects), the status table, charts of wells needing attention, and the same
    tables as workbook sheets; without --network the report has no such section."""
    args = ["report", "scenario_data/lab_results_eastbank.xlsx", "--columns", "scenario_data/columns_eastbank.yaml",
            "--sites", "scenario_data/sites.csv", "--limits", "limits"]
    assert main(args + ["--network", "scenario_data/network.csv", "--design", "scenario_data/design.yaml",
                        "--out", str(tmp_path / "r.html"), "--xlsx", str(tmp_path / "r.xlsx")]) == 0
    page = (tmp_path / "r.html").read_text(encoding="utf-8")
    section = page[page.index('<section id="wells"'):page.index('<section id="design"')]
    design = page[page.index('<section id="design"'):]
    assert "site-wide false positive rate (SWFPR) 0.1" in design and "kappa computed" in design
    assert "Wells against background: design" in design  # the design is stated in the appendix
    assert "Status over the retest sequence" in section
    assert 'id="well-chart-BH01-arsenic-total"' in section
    sheets = pd.ExcelFile(tmp_path / "r.xlsx").sheet_names
    assert {"wells_design", "wells_status", "wells_limits", "wells_confidence"} <= set(sheets)
    assert main(args + ["--out", str(tmp_path / "plain.html")]) == 0
    assert 'id="wells"' not in (tmp_path / "plain.html").read_text(encoding="utf-8")
    assert main(args + ["--design", "scenario_data/design.yaml", "--out", str(tmp_path / "x.html")]) == 2
    assert "--design needs --network" in capsys.readouterr().err
