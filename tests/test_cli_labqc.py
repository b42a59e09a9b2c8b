"""``tracescreen labqc`` end to end: the real deliverable, a constructed batch with a QC file and a
calibration file, and clear one-line errors.

Check values: the real deliverable's verdict counts (see test_retest_labqc_real_deliverable.py); the
constructed batch's matrix spike at 50 % (NFG 2020 30-74 % tier: J- / UJ, memory) and a result
above the highest calibration standard (dilute and reanalyse: EPA 200.7 / 200.8 practice, memory).
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from tracescreen.caution import CAUTION
from tracescreen.cli import main

DATA = Path(__file__).parent / "data" / "bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv"
MAPPING = """columns:
  SiteID: site_id
  sys_sample_code: sample_id
  sample_date: sampled_at
  chemical_name: analyte
  result_value: result
  result_unit: unit
  method_detection_limit: detection_limit
  lab_qualifiers: qualifier
  sample_type_code: sample_type
  lab_sdg: batch
  lab_name_code: lab
  analysis_date: analysed_at
"""


def test_real_deliverable(tmp_path, capsys):
    cols = tmp_path / "cols.yaml"
    cols.write_text(MAPPING, encoding="utf-8")
    rc = main(["labqc", str(DATA), "--columns", str(cols), "--date-order", "mdy", "--out", str(tmp_path / "out")])
    out = capsys.readouterr().out
    assert rc == 0
    assert "QC rows by element: method_blank 1, lcs 1, lcsd 1, ms 11, msd 20" in out
    assert "Verdicts: 55  within 49  below 0  above 0  not judged 6" in out
    assert "Batch R1809466 of ALSRNY" in out and " ".join(CAUTION.split()[:4]) in out
    v = pd.read_csv(tmp_path / "out" / "qc_verdicts.csv")
    assert len(v) == 55 and set(v["window_from"]) == {"lab", "guideline"}
    for name in ("qc_rows.csv", "qualified_results.csv", "qc_batches.csv", "qc_retest.csv"):
        assert (tmp_path / "out" / name).is_file()


def _batch(tmp_path: Path) -> list[str]:
    lab = tmp_path / "lab.csv"
    lab.write_text(
        "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,sample_type,batch,lab\n"
        "S1,A1,2024-05-01,lead,total,5.0,ug/L,1,sample,B1,Lab A\n"
        "S2,A2,2024-05-01,lead,total,<0.5,ug/L,0.5,sample,B1,Lab A\n"
        "S3,A3,2024-05-01,lead,total,250,ug/L,1,sample,B1,Lab A\n"
        ",A1MS,2024-05-01,lead,total,15.0,ug/L,1,MS,B1,Lab A\n", encoding="utf-8")
    qcf = tmp_path / "qc.csv"
    qcf.write_text("batch,lab,qc type,analyte,fraction,unit,result,spike added,original result\n"
                   "B1,Lab A,MSD,lead,total,ug/L,16.0,20,5.0\n", encoding="utf-8")
    cal = tmp_path / "cal.csv"
    cal.write_text("analyte,run,concentration,unit,response\n"
                   "lead,B1,0,ug/L,0.001\nlead,B1,1,ug/L,0.051\nlead,B1,10,ug/L,0.50\nlead,B1,50,ug/L,2.49\n"
                   "lead,B1,100,ug/L,5.02\n",
                   encoding="utf-8")
    return [str(lab), "--qc", str(qcf), "--calibration", str(cal)]


def test_constructed_batch_with_qc_and_calibration_files(tmp_path, capsys):
    # the MS row of the lab file has no spike amount column: the QC file's MSD carries the numbers;
    # the MS row itself is read (reported recovery missing) and not judged
    rc = main(["labqc", *_batch(tmp_path), "--out", str(tmp_path / "out")])
    out = capsys.readouterr().out
    assert rc == 0, out
    q = pd.read_csv(tmp_path / "out" / "qualified_results.csv", keep_default_na=False)
    assert dict(zip(q["sample_id"], q["lab_qc_qualifier"])) == {"A1": "J-", "A2": "UJ", "A3": "J-"}
    r = pd.read_csv(tmp_path / "out" / "qc_retest.csv")
    assert set(r["reason"]) == {"spike_recovery_low", "above_calibration_range", "dl_not_supported"}
    assert r.loc[r["reason"] == "above_calibration_range", "sample_id"].tolist() == ["A3"]
    # the reported 0.5 ug/L is below the curve's LOD, 3.3 x 0.0101 / 0.05015 = 0.664 ug/L
    assert r.loc[r["reason"] == "dl_not_supported", "sample_id"].tolist() == ["A2"]
    fits = pd.read_csv(tmp_path / "out" / "calibration_fits.csv")
    assert fits[["analyte", "run", "n"]].values.tolist() == [["lead", "B1", 5]]
    assert fits["lod_ug_L"].iloc[0] == pytest.approx(0.664, abs=5e-4)
    assert "Calibration rows read: 5  used: 5  rejected: 0" in out


def test_errors_are_one_line(tmp_path, capsys):
    assert main(["labqc", "--out", str(tmp_path)]) == 2
    assert "nothing to review" in capsys.readouterr().err
    args = _batch(tmp_path)
    args[2] = str(tmp_path / "missing.csv")
    assert main(["labqc", *args, "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "missing.csv: QC file not found" in err


def test_screen_reviews_the_lab_qc_rows_of_its_files(tmp_path, capsys):
    args = _batch(tmp_path)[:3]          # lab file and QC file, no calibration
    limits = Path(__file__).resolve().parents[1] / "limits" / "who_gdwq_2022.yaml"
    rc = main(["screen", *args, "--limits", str(limits), "--out", str(tmp_path / "out")])
    assert rc == 0, capsys.readouterr().err
    r = pd.read_csv(tmp_path / "out" / "retest.csv")
    low = r[r["reason"] == "spike_recovery_low"]
    assert sorted(low["sample_id"]) == ["A1", "A2", "A3"]
    assert "suggested_action" in r.columns and low["suggested_action"].str.contains("re-digest").all()
    assert (tmp_path / "out" / "qc_verdicts.csv").is_file() and (tmp_path / "out" / "qc_batches.csv").is_file()


def test_screen_with_calibration_says_what_detection_limit_the_calibration_supports(tmp_path, capsys):
    # arsenic < 20 ug/L cannot decide against WHO's 10 ug/L (dl_too_high); the lab's calibration
    # supports 3.3 x 0.0101 / 0.05015 = 0.664 ug/L, so the laboratory can report lower
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,batch,lab\n"
                   "S1,A1,2024-05-01,arsenic,total,<20,ug/L,20,B1,Lab A\n", encoding="utf-8")
    cal = tmp_path / "cal.csv"
    cal.write_text("analyte,run,concentration,unit,response\n" + "".join(
        f"arsenic,B1,{c},ug/L,{r}\n" for c, r in [(0, 0.001), (1, 0.051), (10, 0.50), (50, 2.49), (100, 5.02)]),
        encoding="utf-8")
    limits = Path(__file__).resolve().parents[1] / "limits" / "who_gdwq_2022.yaml"
    rc = main(["screen", str(lab), "--limits", str(limits), "--calibration", str(cal), "--out", str(tmp_path / "o")])
    assert rc == 0, capsys.readouterr().err
    r = pd.read_csv(tmp_path / "o" / "retest.csv")
    detail = r.loc[r["reason"] == "dl_too_high", "detail"].item()
    assert "the calibration supports a detection limit of 0.6642 µg/L (calibration LOD" in detail
    assert (tmp_path / "o" / "calibration_fits.csv").is_file()


def test_labqc_reads_the_qc_rows_kept_in_a_workspace(tmp_path, capsys):
    # the workspace keeps the set-aside rows with their original cells, so the review sees the same QC rows
    cols = tmp_path / "cols.yaml"
    cols.write_text(MAPPING, encoding="utf-8")
    ws = tmp_path / "ws"
    assert main(["import", str(DATA), "--workspace", str(ws), "--columns", str(cols), "--date-order", "mdy"]) == 0
    capsys.readouterr()
    rc = main(["labqc", "--workspace", str(ws), "--columns", str(cols), "--date-order", "mdy", "--out", str(tmp_path / "o")])
    out = capsys.readouterr().out
    assert rc == 0 and "Verdicts: 55  within 49  below 0  above 0  not judged 6" in out


def test_qc_rows_of_no_known_element_are_listed_not_dropped(tmp_path, capsys):
    lab = _batch(tmp_path)[0]
    qcf = tmp_path / "qc_summary.csv"
    qcf.write_text("batch,lab,qc type,analyte,fraction,unit,result,spike added,original result\n"
                   "B1,Lab A,MS,lead,total,ug/L,21.0,20,1.0\n"
                   "B1,Lab A,Tune check,lead,total,ug/L,1.0,,\n", encoding="utf-8")
    rc = main(["labqc", lab, "--qc", str(qcf), "--out", str(tmp_path / "o")])
    captured = capsys.readouterr()
    assert rc == 0 and "1 QC rows are not a QC element the review knows" in captured.err
    u = pd.read_csv(tmp_path / "o" / "qc_unrecognised.csv")
    assert u[["row", "qc_type"]].values.tolist() == [[3, "Tune check"]]


def test_report_carries_the_data_review_narrative(tmp_path, capsys):
    import openpyxl

    args = _batch(tmp_path)            # lab file, QC file and calibration file
    limits = Path(__file__).resolve().parents[1] / "limits" / "who_gdwq_2022.yaml"
    rc = main(["report", *args, "--limits", str(limits), "--out", str(tmp_path / "r.html"),
               "--xlsx", str(tmp_path / "r.xlsx")])
    assert rc == 0, capsys.readouterr().err
    text = (tmp_path / "r.html").read_text(encoding="utf-8")
    assert '<section id="labqc"' in text and "Data review narrative, by batch" in text
    assert "Batch B1 of Lab A: 3 results" in text and "recovery 55 % outside 75-125 %" in text
    assert 'id="calibration-table"' in text
    wb = openpyxl.load_workbook(tmp_path / "r.xlsx", read_only=True)
    assert {"lab_qc_batches", "lab_qc_verdicts", "calibration"} <= set(wb.sheetnames)
