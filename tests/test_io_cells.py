"""Parsing of lab files: results with non-detects, dates, vocabularies, and row conservation."""

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st
from lab_files import write_csv

from tracescreen.io import cells as parsing
from tracescreen.io import loading
from tracescreen.io.loading import LoadOptions, load_results

HEAD = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,qualifier\n"


def _load(tmp_path, body, **kw):
    return load_results([write_csv(tmp_path, HEAD + body)], LoadOptions(**kw))


def test_less_than_with_space_is_nondetect_at_that_limit(tmp_path):
    """'< 0.5' is a non-detect at detection limit 0.5 in the row's unit (common laboratory practice)."""
    r = _load(tmp_path, "S1,A,2021-03-04,Lead,total,< 0.5,ug/L,,\n").accepted.iloc[0]
    assert not r.detected and np.isnan(r.value_ug_L) and r.detection_limit_ug_L == 0.5


def test_nd_takes_detection_limit_from_its_column(tmp_path):
    """'ND' with a separate detection-limit column: non-detect at that column's value (mg/L -> µg/L)."""
    r = _load(tmp_path, "S1,A,2021-03-04,Lead,total,ND,mg/L,0.001,\n").accepted.iloc[0]
    assert not r.detected and r.detection_limit_ug_L == 1.0


def test_blank_result_with_u_qualifier_is_nondetect(tmp_path):
    """An empty result with qualifier U is a non-detect (US EPA data qualifier U; common practice)."""
    r = _load(tmp_path, "S1,A,2021-03-04,Lead,total,,ug/L,0.2,U\n").accepted.iloc[0]
    assert not r.detected and r.detection_limit_ug_L == 0.2


def test_number_with_u_qualifier_is_nondetect_at_that_number(tmp_path):
    """'0.5' with qualifier U: not detected at 0.5 when no detection-limit column is given (common practice)."""
    r = _load(tmp_path, "S1,A,2021-03-04,Lead,total,0.5,ug/L,,U\n").accepted.iloc[0]
    assert not r.detected and r.detection_limit_ug_L == 0.5


def test_j_qualifier_is_detected_estimated(tmp_path):
    """Qualifier J: detected, estimated value (US EPA data qualifier J; common practice)."""
    r = _load(tmp_path, "S1,A,2021-03-04,Lead,total,0.3,ug/L,0.2,J\n").accepted.iloc[0]
    assert r.detected and r.value_ug_L == 0.3 and r.qualifier == "J"


def test_micro_sign_greek_mu_and_ppb_agree(tmp_path):
    """µg/L (U+00B5), μg/L (U+03BC) and ppb give the same µg/L value."""
    body = "".join(f"S1,A{i},2021-03-04,Lead,total,3,{u},,\n" for i, u in enumerate(["\u00b5g/L", "\u03bcg/L", "ppb"]))
    acc = _load(tmp_path, body).accepted
    assert acc["value_ug_L"].tolist() == [3.0, 3.0, 3.0]


def test_unusable_cells_are_rejected_with_reasons(tmp_path):
    """Each kind of bad cell is rejected with a reason naming it; nothing is silently dropped."""
    body = ("S1,A,2021-02-30,Lead,total,1,ug/L,,\n"
            "S1,A,2021-03-04,Unobtainium,total,1,ug/L,,\n"
            "S1,A,2021-03-04,Lead,total,1,mg/kg,,\n"
            "S1,A,2021-03-04,Lead,total,>50,ug/L,,\n"
            "S1,A,2021-03-04,Lead,total,ND,ug/L,,\n"
            "S1,A,2021-03-04,Lead,total,-1,ug/L,,\n"
            "S1,A,2021-03-04,Lead,,1,ug/L,,\n"
            "S1,A,2021-03-04,Lead,total,1\n")
    res = _load(tmp_path, body)
    reasons = res.rejected["reason"].tolist()
    assert len(reasons) == 6
    assert "is not a date" in reasons[0]
    assert "mg/kg" in reasons[1]
    assert "without a detection limit" in reasons[2]
    assert "negative" in reasons[3]
    assert "fraction not given" in reasons[4]
    assert "expected 9 fields" in reasons[5]
    assert res.rejected["row"].tolist() == [2, 4, 6, 7, 8, 9]
    # '>50' is kept as "at least 50 µg/L" (above the calibrated range), not thrown away (README.md#input-lab-results)
    assert res.accepted["row"].tolist() == [5] and res.accepted["value_ug_L"].tolist() == [50.0]
    assert res.accepted["qualifier_meaning"].astype(str).tolist() == ["above_range"]
    # an analyte tracescreen does not screen is set aside (counted, listed), not an error in the file
    assert res.set_aside["row"].tolist() == [3] and "not in the analyte registry" in res.set_aside["reason"].iloc[0]


def test_decimal_comma_only_with_option(tmp_path):
    """'0,5' is rejected by default and read as 0.5 only with the decimal-comma option."""
    body = 'S1,A,2021-03-04,Lead,total,"0,5",ug/L,,\n'
    assert len(_load(tmp_path, body).rejected) == 1
    assert _load(tmp_path, body, decimal_comma=True).accepted["value_ug_L"].tolist() == [0.5]


def test_dates_day_first_and_month_first_need_the_option():
    """04/03/2021 is 4 March with dmy, 3 April with mdy, and rejected in ISO mode (never guessed)."""
    s = pd.Series(["04/03/2021", "2021-03-04"])
    iso, bad = parsing.parse_dates(s, "iso")
    assert bad.tolist() == [True, False]
    dmy, _ = parsing.parse_dates(s, "dmy")
    mdy, _ = parsing.parse_dates(s, "mdy")
    assert str(dmy[0])[:10] == "2021-03-04" and str(mdy[0])[:10] == "2021-04-03"


def test_fraction_and_sample_type_synonyms():
    """Fraction and sample-type synonyms map to the canonical words; unknown words are flagged."""
    fr, bad = parsing.parse_vocabulary(pd.Series(["Total", "Filtered", "D", "x"]), parsing.FRACTION_VOCAB)
    assert fr.tolist()[:3] == ["total", "dissolved", "dissolved"] and bad.tolist() == [False, False, False, True]
    stype, _ = parsing.parse_vocabulary(pd.Series(["Field Duplicate", "FB", "Method Blank", ""]), parsing.SAMPLE_TYPE_VOCAB)
    assert stype.tolist() == ["field_duplicate", "field_blank", "lab_blank", "sample"]


def test_header_variants_and_title_rows(tmp_path):
    """Common header spellings are recognised and a title row above the header is skipped."""
    text = ("Certificate of analysis\n"
            "Station,Sample No,Date,Determinand,Value,Units,LOR\n"
            "S1,A,2021-03-04,Copper,2,ug/L,1\n")
    res = load_results([write_csv(tmp_path, text)], LoadOptions(default_fraction="total"))
    assert len(res.accepted) == 1 and res.accepted.iloc[0]["row"] == 3


def test_not_utf8_is_a_clear_error(tmp_path):
    """A Latin-1 file with µ is refused with a message naming the file and the encoding option."""
    p = tmp_path / "latin.csv"
    p.write_bytes((HEAD + "S1,A,2021-03-04,Lead,total,1,\u00b5g/L,,\n").encode("latin-1"))
    try:
        load_results([p])
    except loading.LoadError as exc:
        assert "latin.csv" in str(exc) and "--encoding" in str(exc)
    else:
        raise AssertionError("expected LoadError")
    ok = load_results([p], LoadOptions(encoding="latin-1"))
    assert ok.accepted["value_ug_L"].tolist() == [1.0]


CELL = st.sampled_from(["1", "0.5", "<0.2", "ND", "", "abc", "-3", ">9", "1,2", "2 J", "0.1 U"])
ROW = st.tuples(st.sampled_from(["S1", "S2", ""]), st.sampled_from(["2021-01-05", "2021-13-01", "", "05/01/2021"]),
                st.sampled_from(["Lead", "Pb, dissolved", "Zinc", "Nope"]), st.sampled_from(["total", "", "dissolved"]),
                CELL, st.sampled_from(["ug/L", "mg/L", "ppb", "kg", ""]), st.sampled_from(["", "0.1", "x"]),
                st.sampled_from(["", "U", "J"]))


@settings(max_examples=60, deadline=None)
@given(rows=st.lists(ROW, min_size=1, max_size=40))
def test_row_conservation(tmp_path_factory, rows):
    """Property: rows read = accepted + set aside + rejected, and every row not accepted has a reason (project rule)."""
    d = tmp_path_factory.mktemp("prop")
    body = "".join(f"{s},X{i},{d_},{a},{f},\"{r}\",{u},{dl},{q}\n" for i, (s, d_, a, f, r, u, dl, q) in enumerate(rows))
    res = load_results([write_csv(d, HEAD + body)])
    read = int(res.files["rows_read"].sum()) + int(res.files["blank_rows"].sum())
    assert read == len(rows)
    assert int(res.files["rows_read"].sum()) == len(res.accepted) + len(res.set_aside) + len(res.rejected)
    assert (res.files["rows_read"] == res.files["accepted"] + res.files["set_aside"] + res.files["rejected"]).all()
    assert (res.rejected["reason"].str.len() > 0).all() and (res.set_aside["reason"].str.len() > 0).all()
    assert sorted(res.accepted["row"].tolist() + res.set_aside["row"].tolist() + res.rejected["row"].tolist()) == list(range(2, 2 + int(res.files["rows_read"].sum()))) or res.files["blank_rows"].sum() > 0


def test_xlsx_with_title_rows_dates_and_numbers(tmp_path):
    """An Excel sheet: title rows skipped, date cells and numeric cells read, rows numbered as in Excel."""
    import datetime as dt

    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = "Metals"
    ws.append(["Certificate 17"])
    ws.append([])
    ws.append(["Site", "Sample ID", "Sample Date", "Analyte", "Fraction", "Result", "Units", "LOR"])
    ws.append(["S1", "A1", dt.datetime(2021, 3, 4), "Zinc", "Total", 0.05, "mg/L", 0.002])
    ws.append(["S1", "A2", dt.datetime(2021, 3, 4), "Zinc", "Total", "<0.002", "mg/L", 0.002])
    p = tmp_path / "lab.xlsx"
    wb.save(p)
    res = load_results([p])
    acc = res.accepted
    assert acc["row"].tolist() == [4, 5] and acc["sheet"].astype(str).tolist() == ["Metals", "Metals"]
    assert acc["value_ug_L"].iloc[0] == 50.0 and not acc["detected"].iloc[1]
    assert acc["detection_limit_ug_L"].tolist() == [2.0, 2.0]
    assert str(acc["sampled_at"].iloc[0])[:10] == "2021-03-04"
    try:
        load_results([p], LoadOptions(sheet="Nope"))
    except loading.LoadError as exc:
        assert "no sheet 'Nope'" in str(exc) and "Metals" in str(exc)
    else:
        raise AssertionError("expected LoadError")


def test_binary_junk_and_empty_files_are_clear_errors(tmp_path):
    """Binary junk, an empty file and a fake .xlsx give one-line errors naming the file."""
    cases = {"junk.csv": b"\x00\x01\x02binary", "empty.csv": b"", "fake.xlsx": b"not a zip"}
    for name, data in cases.items():
        p = tmp_path / name
        p.write_bytes(data)
        try:
            load_results([p])
        except loading.LoadError as exc:
            assert name in str(exc) and "\n" not in str(exc)
        else:
            raise AssertionError(f"expected LoadError for {name}")
