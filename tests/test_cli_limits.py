"""``tracescreen limits``: every entry in force on a date with its value for the given water chemistry.

Check values: CCME zinc long-term exp(0.947 ln H - 0.815 pH + 0.398 ln DOC + 4.625) at H 50, pH 7.5, DOC 2
(computed by hand from the equation of the CCME 2018 fact sheet, from memory); US EPA cadmium CMC 0.94 µg/L at
H 50 (Colorado Regulation 31 calculator copy with the same 2016 coefficients, checked secondary).
"""

from __future__ import annotations

import math
from pathlib import Path

import pandas as pd

from tracescreen.caution import CAUTION
from tracescreen.cli import main

LIMITS = Path(__file__).resolve().parents[1] / "limits"


def test_limits_command_lists_entries_with_computed_values(tmp_path, capsys):
    out_csv = tmp_path / "limits.csv"
    code = main(["limits", "--limits", str(LIMITS), "--limits", str(LIMITS / "canada"), "--date", "2024-06-01",
                 "--hardness", "50", "--ph", "7.5", "--doc", "2", "--out", str(out_csv)])
    text = capsys.readouterr().out
    assert code == 0 and CAUTION in text
    assert "Limits in force on 2024-06-01 (hardness 50, ph 7.5, doc 2)" in text
    rows = pd.read_csv(out_csv)
    zn = rows[(rows["table_id"] == "ccme_freshwater_aquatic_life") & (rows["analyte"] == "zinc")
              & (rows["duration"] == "long-term")].iloc[0]
    assert math.isclose(zn["limit_ug_L"], math.exp(0.947 * math.log(50) - 0.815 * 7.5 + 0.398 * math.log(2) + 4.625))
    cd = rows[(rows["table_id"] == "us_epa_nrwqc_freshwater_aquatic_life") & (rows["analyte"] == "cadmium")
              & (rows["duration"] == "acute")].iloc[0]
    assert cd["limit_ug_L"] == 0.94  # rounded criterion, 40 CFR 131.38(b)(2)
    eu = rows[rows["table_id"].str.startswith("eu_dwd")]
    assert set(eu["table_id"]) == {"eu_dwd_2020_2184"}  # 98/83/EC is not in force in 2024


def test_limits_command_says_which_input_is_missing(tmp_path, capsys):
    assert main(["limits", "--limits", str(LIMITS / "canada"), "--table", "ccme_freshwater_aquatic_life",
                 "--analyte", "zinc", "--date", "2024-06-01", "--hardness", "50"]) == 0
    text = capsys.readouterr().out
    assert "[pH unknown: limit not computed]" in text and "[dissolved organic carbon unknown: limit not computed]" in text


def test_limits_command_by_date_and_site_attribute(tmp_path, capsys):
    """Before 13 January 2023 the 98/83/EC antimony value (5.0 µg/l) applies; the EU cadmium AA-EQS for
    'other' surface waters (0.2 µg/l) is chosen by --site-attribute water_category=other."""
    out_csv = tmp_path / "l.csv"
    assert main(["limits", "--limits", str(LIMITS), "--limits", str(LIMITS / "eu"), "--date", "2020-05-01",
                 "--site-attribute", "water_category=other", "--hardness", "120", "--out", str(out_csv)]) == 0
    rows = pd.read_csv(out_csv)
    sb = rows[(rows["analyte"] == "antimony") & rows["table_id"].str.startswith("eu_dwd")]
    assert sb[["table_id", "limit_ug_L"]].values.tolist() == [["eu_dwd_98_83", 5.0]]
    cd = rows[(rows["table_id"] == "eu_eqs_2008_105") & (rows["analyte"] == "cadmium")]
    assert sorted(cd["limit_ug_L"]) == [0.2, 0.9]  # AA other 0.2; MAC class 4 (100 to < 200) 0.9


def test_limits_command_errors_are_one_line(capsys):
    assert main(["limits", "--limits", str(LIMITS), "--date", "2024-13-01"]) == 2
    assert "--date '2024-13-01' is not a date" in capsys.readouterr().err
    assert main(["limits", "--limits", str(LIMITS), "--site-attribute", "water_category=lake"]) == 2
    assert "water_category is one of inland, other" in capsys.readouterr().err
    assert main(["limits", "--limits", str(LIMITS), "--table", "nope"]) == 2
    assert "no limit table with id nope" in capsys.readouterr().err


def test_limits_command_for_one_site_of_a_sites_file(tmp_path, capsys):
    """--sites/--site take the site's uses, default hardness and attributes: the demo's soft-water stream KR07
    (hardness 18, lotic) gets the lead CCC at its own hardness, 0.36 µg/L (exp(1.273 ln 18 - 4.705) with the CF
    capped at 1, rounded to two significant figures; no 25 mg/L floor), and only the lotic selenium value."""
    out_csv = tmp_path / "kr07.csv"
    sites = Path(__file__).resolve().parents[1] / "scenario_data" / "sites.csv"
    assert main(["limits", "--limits", str(LIMITS), "--sites", str(sites), "--site", "KR07", "--date", "2024-06-01",
                 "--out", str(out_csv)]) == 0
    rows = pd.read_csv(out_csv)
    assert set(rows["table_id"]) == {"us_epa_nrwqc_freshwater_aquatic_life"}  # KR07 serves freshwater_aquatic only
    pb = rows[(rows["analyte"] == "lead") & (rows["duration"] == "chronic")].iloc[0]
    assert pb["limit_ug_L"] == 0.36
    assert rows.loc[rows["analyte"] == "selenium", "limit_ug_L"].tolist() == [3.1]
    assert main(["limits", "--limits", str(LIMITS), "--sites", str(sites), "--site", "NOPE"]) == 2
    assert "--site 'NOPE' is not in" in capsys.readouterr().err
