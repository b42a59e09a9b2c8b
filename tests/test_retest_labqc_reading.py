"""Reading QC rows: header recognition, R/database empty markers, units, the SD ambiguity, QC files.

Header spellings: the QC columns of a real NYSDEC-format laboratory deliverable
(tests/data/bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv: qc_spike_added, qc_spike_lcl, qc_rpd_cl ...)
and common QC-summary spellings (common practice).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tracescreen.retest.labqc.elements import classify, vocabulary
from tracescreen.retest.labqc.reading import qc_from_cells, qc_number, read_qc_file, recognise_qc_columns


def test_qc_numbers():
    s = pd.Series(["101", "NA", "N/A", "<1", "12.5%", ">130", "", "null", "-"])
    out = qc_number(s).to_numpy()
    assert out[0] == 101.0 and out[3] == 1.0 and out[4] == 12.5 and out[5] == 130.0
    assert np.isnan(out[[1, 2, 6, 7, 8]]).all()


def test_deliverable_headers_are_recognised():
    headers = ["sys_sample_code", "lab_anl_method_name", "chemical_name", "result_value", "result_unit",
               "qc_original_conc", "qc_spike_added", "qc_spike_measured", "qc_spike_recovery", "qc_dup_spike_added",
               "qc_rpd", "qc_spike_lcl", "qc_spike_ucl", "qc_rpd_cl", "qc_spike_status", "sample_type_code",
               "quantitation_limit", "prep_date", "lab_sdg"]
    cols = recognise_qc_columns(headers)
    assert cols["spike_added"] == ["qc_spike_added", "qc_dup_spike_added"]
    assert cols["recovery_low"] == ["qc_spike_lcl"] and cols["rpd_limit"] == ["qc_rpd_cl"]
    assert cols["method"] == ["lab_anl_method_name"] and cols["qc_type"] == ["sample_type_code"]
    assert cols["quantitation_limit"] == ["quantitation_limit"] and cols["prepared_at"] == ["prep_date"]


def test_sd_is_a_spike_duplicate_with_a_spike_amount_else_a_serial_dilution():
    assert list(classify(pd.Series(["SD", "SD", "ccv", "Quality Control Sample-Lab Duplicate", "xyz"]),
                         np.array([True, False, False, False, False]))) == \
        ["msd", "serial_dilution", "ccv", "lab_duplicate", ""]
    v = vocabulary()
    assert v["code"].is_unique and v["checked"].isin(["seen", "memory"]).all()


def _cells(**cols) -> pd.DataFrame:
    df = pd.DataFrame(cols)
    df.insert(0, "row", np.arange(len(df)) + 2)
    df.insert(0, "sheet", "")
    df.insert(0, "file", "qc.csv")
    return df


def test_units_are_converted_and_nondetects_read_from_the_qualifier():
    cells = _cells(**{"QC Type": ["LCS", "MB", "MB", "N"], "Analyte": ["Lead", "Lead", "Zinc", "Lead"],
                      "Result": ["0.0188", "0.05", "-0.004", "1"], "Unit": ["mg/L", "ug/L", "mg/L", "ug/L"],
                      "True Value": ["0.02", "", "", ""], "Qualifier": ["", "U", "", ""],
                      "Detection Limit": ["0.0001", "0.05", "0.002", ""]})
    q = qc_from_cells(cells)
    assert q["element"].tolist() == ["lcs", "method_blank", "method_blank"]          # the N row is not QC
    assert q["result_ug_L"].tolist()[0] == pytest.approx(18.8)
    assert q["true_value_ug_L"].iloc[0] == pytest.approx(20.0)
    assert not q["detected"].iloc[1] and np.isnan(q["result_ug_L"].iloc[1])
    assert q["detected"].iloc[2] and q["result_ug_L"].iloc[2] == pytest.approx(-4.0)   # a negative blank is a number
    assert q["analyte"].tolist() == ["lead", "lead", "zinc"]


def test_a_separate_qc_file_csv_and_xlsx(tmp_path):
    text = ("Laboratory QC summary, batch WG1234\n"
            "Batch,QC Type,Analyte,Fraction,Unit,Result,Spike Added,Original Result,%Rec,Lower Limit,Upper Limit\n"
            "WG1234,MS,Copper,Total,ug/L,61.0,50,20.0,82,75,125\n"
            "WG1234,MSD,Copper,Total,ug/L,66.0,50,20.0,92,75,125\n")
    p = tmp_path / "qc.csv"
    p.write_text(text, encoding="utf-8")
    q = read_qc_file(p)
    assert q["element"].tolist() == ["ms", "msd"] and q["row"].tolist() == [3, 4]
    assert q["recovery_low"].tolist() == [75.0, 75.0] and q["original_ug_L"].tolist() == [20.0, 20.0]
    x = tmp_path / "qc.xlsx"
    pd.read_csv(p, header=None, dtype=str, keep_default_na=False, skiprows=1).to_excel(x, header=False, index=False)
    qx = read_qc_file(x)
    assert qx["element"].tolist() == ["ms", "msd"] and qx["reported_recovery"].tolist() == [82.0, 92.0]


def test_unreadable_qc_files_name_the_file(tmp_path):
    with pytest.raises(ValueError, match="missing.csv: QC file not found"):
        read_qc_file(tmp_path / "missing.csv")
    p = tmp_path / "notes.csv"
    p.write_text("a,b\n1,2\n", encoding="utf-8")
    with pytest.raises(ValueError, match="notes.csv: no recognisable QC columns"):
        read_qc_file(p)


def test_a_less_than_result_is_a_nondetect_at_that_level():
    # "<2" in a blank's result cell is not a 2 ug/L contamination: not detected, DL 2 (common practice)
    q = qc_from_cells(_cells(**{"QC Type": ["MB", "MB"], "QC Sample": ["B-MB", "B-MB"], "Analyte": ["Zinc", "Copper"],
                                "Result": ["<2", "1.5"], "Unit": ["ug/L", "ug/L"], "Detection Limit": ["", "0.5"]}))
    assert q["detected"].tolist() == [False, True]
    assert q["detection_limit_ug_L"].tolist() == [2.0, 0.5] and q["qc_sample_id"].tolist() == ["B-MB", "B-MB"]
