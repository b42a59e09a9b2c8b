"""The column mapping (--columns): precedence, ignore, combine, values, derive, date order, checks.

The rules checked here are the tool's own (README, "Column mapping"); the lab words translated
(fraction codes ``.``/``T``/``L``, sample types ``PS``/``DUP``/``FB``, the free-text sample name
``RM 23-Swiftwater Park DUP``) are as a real deliverable writes them (tests/data/README.md,
lab_edd_kenai_sgs_*). File contents below are inputs; the values checked are what the mapping says.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest
from lab_files import write_csv

from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.io.mapping import ColumnMapError, load_column_map


def _map(tmp_path, text: str, name: str = "columns.yaml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return load_column_map(p)


def _load(tmp_path, csv: str, mapping: str | None = None, **opts):
    cm = _map(tmp_path, mapping) if mapping else None
    return load_results([write_csv(tmp_path, csv)], LoadOptions(column_map=cm, **opts))


def test_a_first_version_mapping_reads_the_same(tmp_path):
    """columns + defaults, the form the first version wrote, is still a valid mapping."""
    csv = "Point Ref,Lab No,Date,Analyte,Reading,Units\nP1,L1,2021-03-04,Lead,3,ug/L\n"
    loaded = _load(tmp_path, csv, "columns:\n  Point Ref: site_id\n  Lab No: sample_id\n  Reading: result\n"
                                  "defaults:\n  fraction: total\n  lab: Eastbank Analytical\n")
    acc = loaded.accepted
    assert (acc["site_id"].iloc[0], acc["sample_id"].iloc[0], acc["lab"].iloc[0]) == ("P1", "L1", "Eastbank Analytical")
    assert acc["fraction"].iloc[0] == "total" and acc["value_ug_L"].iloc[0] == 3.0


def test_a_mapped_header_wins_over_recognition_and_the_rival_is_named(tmp_path):
    """'Site' would be recognised as site_id; the mapping says 'Location' is: 'Location' wins and a
    note names 'Site'."""
    csv = "Site,Location,Sample,Date,Analyte,Fraction,Result,Unit\nBASIN,W-07,A,2021-03-04,Lead,total,3,ug/L\n"
    loaded = _load(tmp_path, csv, "columns:\n  Location: site_id\n")
    assert loaded.accepted["site_id"].iloc[0] == "W-07"
    assert any("'Site' also looks like site_id; the mapped column 'Location' is used" in w for w in loaded.warnings)


def test_two_headers_claiming_one_column_are_named(tmp_path):
    csv = "Site,Sample ID,Lab Sample ID,Date,Analyte,Fraction,Result,Unit\nS1,A,L-9,2021-03-04,Lead,total,3,ug/L\n"
    loaded = _load(tmp_path, csv)
    assert loaded.accepted["sample_id"].iloc[0] == "A"  # the first spelling listed wins (Sample ID)
    assert any("'Sample ID', 'Lab Sample ID' all look like sample_id: 'Sample ID' is used" in w
               for w in loaded.warnings)


def test_an_ignored_header_is_never_read(tmp_path):
    """DL (1.5) would win over LOD (2.5); ignoring DL makes LOD the detection limit, and no note."""
    csv = "Site,Sample,Date,Analyte,Fraction,Result,Unit,DL,LOD\nS1,A,2021-03-04,Lead,total,ND,ug/L,1.5,2.5\n"
    plain = _load(tmp_path, csv)
    assert plain.accepted["detection_limit_ug_L"].iloc[0] == 1.5
    ignored = _load(tmp_path, csv, "ignore: [DL]\n")
    assert ignored.accepted["detection_limit_ug_L"].iloc[0] == 2.5
    assert not any("look like detection_limit" in w for w in ignored.warnings)


def test_combine_date_time_and_time_zone(tmp_path):
    """Date + time (1330 is 13:30) + zone name: one local date-time; the zone is read, not applied
    (README, "Dates and times")."""
    csv = ("Site,Sample,Day,Clock,TZ,Analyte,Fraction,Result,Unit\n"
           "S1,A,2021-03-04,1330,AKDT,Lead,total,3,ug/L\nS1,B,2021-03-04,23:30,EST,Lead,total,3,ug/L\n")
    loaded = _load(tmp_path, csv, "combine:\n  sampled_at: [Day, Clock, TZ]\n")
    assert list(loaded.accepted["sampled_at"]) == [pd.Timestamp("2021-03-04 13:30"), pd.Timestamp("2021-03-04 23:30")]


def test_values_translate_fraction_sample_type_and_qualifier_codes(tmp_path):
    csv = ("Site,Sample,Date,Analyte,Fraction,Result,Unit,Type,Flag,Parent\n"
           "S1,A,2021-03-04,Lead,.,3,ug/L,PS,=,\n"
           "S1,B,2021-03-04,Lead,L,2,ug/L,PS,*,\n"
           "S1,C,2021-03-04,Lead,T,3,ug/L,DUP,=,A\n"
           "S1,D,2021-03-04,Lead,T,0.5,ug/L,FB,<,\n")
    mapping = ("columns:\n  Type: sample_type\n  Flag: qualifier\n"
               "values:\n  fraction: {'.': total, T: total, L: dissolved}\n"
               "  sample_type: {PS: sample, DUP: field_duplicate, FB: field_blank}\n"
               "  qualifier: {'=': '', '*': J, '<': U}\n")
    acc = _load(tmp_path, csv, mapping).accepted.set_index("sample_id")
    assert list(acc["fraction"].astype(str)) == ["total", "dissolved", "total", "total"]
    assert list(acc["sample_type"].astype(str)) == ["sample", "sample", "field_duplicate", "field_blank"]
    assert acc.loc["B", "qualifier_meaning"] == "detected_estimated"  # '*' -> J (NFG 2020: estimated)
    assert not acc.loc["D", "detected"] and acc.loc["D", "detection_limit_ug_L"] == 0.5  # '<' -> U
    assert acc.loc["A", "qualifier_meaning"] == ""  # '=' -> no qualifier, not 'unknown:='


def test_derive_site_and_kind_from_a_free_text_sample_name(tmp_path):
    """'RM 23-Swiftwater Park DUP': site 'RM 23', a field duplicate of 'RM 23-Swiftwater Park'."""
    csv = ("Sample Name,Date,Analyte,Fraction,Result,Unit\n"
           "RM 23-Swiftwater Park,2023-05-02,Lead,total,3,ug/L\n"
           "RM 23-Swiftwater Park DUP,2023-05-02,Lead,total,4,ug/L\n"
           "RM 1.5-Kenai City Dock FB,2023-05-02,Lead,total,0.1,ug/L\n")
    mapping = ("columns:\n  Sample Name: sample_id\n"
               "derive:\n"
               "  site_id: {from: Sample Name, pattern: '^(RM [0-9.]+)'}\n"
               "  sample_type: {from: Sample Name, pattern: ' (DUP|FB)$', otherwise: sample}\n"
               "  parent_sample_id: {from: Sample Name, pattern: '^(?P<value>.*) DUP$'}\n"
               "values:\n  sample_type: {DUP: field_duplicate, FB: field_blank}\n")
    acc = _load(tmp_path, csv, mapping).accepted
    assert list(acc["site_id"].astype(str)) == ["RM 23", "RM 23", "RM 1.5"]
    assert list(acc["sample_type"].astype(str)) == ["sample", "field_duplicate", "field_blank"]
    assert acc["parent_sample_id"].astype(str).tolist() == ["", "RM 23-Swiftwater Park", ""]


def test_date_order_in_the_mapping(tmp_path):
    csv = "Site,Sample,Date,Analyte,Fraction,Result,Unit\nS1,A,05/03/2023,Lead,total,3,ug/L\n"
    loaded = _load(tmp_path, csv, "columns:\n  Site: site_id\ndate_order: mdy\n")
    assert loaded.accepted["sampled_at"].iloc[0] == pd.Timestamp("2023-05-03")


def test_a_mapping_applies_only_to_files_with_its_headers(tmp_path):
    """One mapping for a run of two laboratories: its defaults and values reach only the file that
    has a header it names."""
    cm = _map(tmp_path, "columns:\n  Point Ref: site_id\ndefaults:\n  lab: Eastbank\n")
    a = write_csv(tmp_path, "Point Ref,Sample,Date,Analyte,Fraction,Result,Unit\nP1,A,2021-03-04,Lead,total,3,ug/L\n", "a.csv")
    b = write_csv(tmp_path, "Site,Sample,Date,Analyte,Fraction,Result,Unit\nS1,B,2021-03-04,Lead,total,3,ug/L\n", "b.csv")
    acc = load_results([a, b], LoadOptions(column_map=cm)).accepted.set_index("sample_id")
    assert acc.loc["A", "lab"] == "Eastbank" and acc.loc["B", "lab"] == ""


@pytest.mark.parametrize("text,message", [
    ("colums:\n  A: site_id\n", "unknown section(s) colums"),
    ("columns:\n  A: site\n", "columns > A: unknown tracescreen column 'site'"),
    ("ignore: DL\n", "ignore: must be a list of file headers"),
    ("columns:\n  DL: detection_limit\nignore: [DL]\n", "ignore: header(s) dl are both mapped and ignored"),
    ("combine:\n  sampled_at: Date\n", "combine > sampled_at: must be a list of two or more file headers"),
    ("values:\n  fraction: {T: totals}\n", "values > fraction > T: 'totals' is not one of total, dissolved"),
    ("values:\n  sample_type: {PS: primary}\n", "values > sample_type > PS: 'primary' is not one of"),
    ("values:\n  qualifier: {'*': JJ}\n", "values > qualifier > *: 'JJ' is not a code of the qualifier vocabulary"),
    ("values:\n  limit_type: {LOD: lowest}\n", "values > limit_type > LOD: 'lowest' is not a code or class"),
    ("derive:\n  site_id: {from: Name}\n", "derive > site_id: must give 'from'"),
    ("derive:\n  site_id: {from: Name, pattern: '(RM'}\n", "derive > site_id > pattern: not a regular expression"),
    ("derive:\n  site_id: {from: Name, pattern: '(a)(b)'}\n", "has several groups"),
    ("date_order: ymd\n", "date_order: 'ymd' is not iso, dmy or mdy"),
    ("- a\n- b\n", "expected a mapping with sections"),
])
def test_mapping_mistakes_name_file_section_and_key(tmp_path, text, message):
    with pytest.raises(ColumnMapError) as e:
        _map(tmp_path, text)
    assert str(e.value).startswith(str(tmp_path / "columns.yaml")) and message in str(e.value)


def test_a_mapping_mistake_is_a_clear_cli_error(tmp_path, capsys):
    from tracescreen.cli import main

    csv = write_csv(tmp_path, "Site,Sample,Date,Analyte,Fraction,Result,Unit\nS1,A,2021-03-04,Lead,total,3,ug/L\n")
    bad = tmp_path / "columns.yaml"
    bad.write_text("values:\n  fraction: {T: totals}\n", encoding="utf-8")
    limits = Path(__file__).resolve().parents[1] / "limits" / "who_gdwq_2022.yaml"
    code = main(["screen", str(csv), "--columns", str(bad), "--limits", str(limits), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code != 0 and "values > fraction > T" in err and "Traceback" not in err
