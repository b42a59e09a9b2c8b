"""Formula injection: text cells that a spreadsheet would run are written as text in CSV and XLSX.

Rule: OWASP "CSV Injection" — cells beginning with =, +, -, @ (and tab, carriage return) are prefixed
with an apostrophe; numbers, negative ones included, stay numbers.
"""

import csv

import openpyxl
import pandas as pd

from tracescreen.cli import main
from tracescreen.report import writers as outputs

DANGEROUS = ["=HYPERLINK(\"http://x\",\"y\")", "+1+2", "-2+3", "@SUM(A1:A2)", "\tcmd"]


def _frame():
    return pd.DataFrame({"text": DANGEROUS + ["plain"],
                         "number": [-1.5, 2.0, -3.0, 0.0, -0.001, 7.0],
                         "mixed": pd.Series(["=A1", -4.5, "x", None, 3, "-y"], dtype=object),
                         "=bad header": ["a"] * 6})


def test_csv_cells_and_headers_neutralised(tmp_path):
    """Every dangerous text cell and header starts with an apostrophe in the CSV; numbers are written as numbers (OWASP rule)."""
    p = outputs.write_csv(_frame(), tmp_path / "t.csv")
    with open(p, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    assert header[3] == "'=bad header"
    assert [r[0] for r in body] == ["'" + d for d in DANGEROUS] + ["plain"]
    assert [float(r[1]) for r in body] == [-1.5, 2.0, -3.0, 0.0, -0.001, 7.0]
    assert [r[2] for r in body] == ["'=A1", "-4.5", "x", "", "3", "'-y"]


def test_xlsx_cells_neutralised_numbers_stay_numbers(tmp_path):
    """In the XLSX, dangerous text is text with a leading apostrophe; negative numbers are numeric cells (openpyxl read-back)."""
    p = outputs.write_xlsx({"t": _frame()}, tmp_path / "t.xlsx")
    ws = openpyxl.load_workbook(p)["t"]
    rows = list(ws.iter_rows(values_only=True))
    assert rows[0][3] == "'=bad header"
    assert [r[0] for r in rows[1:]] == ["'" + d for d in DANGEROUS] + ["plain"]
    assert [r[1] for r in rows[1:]] == [-1.5, 2.0, -3.0, 0.0, -0.001, 7.0]
    assert rows[2][2] == -4.5 and isinstance(rows[2][2], float)
    assert all(c.data_type != "f" for row in ws.iter_rows() for c in row)  # no formula cell at all


def test_injected_sample_id_neutralised_end_to_end(tmp_path):
    """A lab file whose sample id is a formula gives screening.csv and retest.csv cells starting with an apostrophe."""
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit\n"
                   "S1,=1+2,2024-01-01,lead,total,9,ug/L,1\n"
                   "S1,@cmd,2024-04-01,lead,total,12,ug/L,1\n", encoding="utf-8")
    limits = tmp_path / "limits.yaml"
    # WHO GDWQ 2022 Annex 3: lead 0.01 mg/L
    limits.write_text("id: who\nname: WHO\nsource: WHO Guidelines for Drinking-water Quality, 4th ed. incl. 1st and "
                      "2nd addenda (2022), Annex 3\nuse: drinking_water\nunit: mg/L\nentries:\n"
                      "  - {analyte: lead, fraction: total, value: 0.01}\n", encoding="utf-8")
    out = tmp_path / "out"
    assert main(["screen", str(lab), "--limits", str(limits), "--out", str(out)]) == 0
    scr = pd.read_csv(out / "screening.csv", dtype=str)
    assert set(scr["sample_id"]) == {"'=1+2", "'@cmd"}
    ret = pd.read_csv(out / "retest.csv", dtype=str)
    assert set(ret["sample_id"]) == {"'=1+2", "'@cmd"}  # near_limit (9 of 10) and first_exceedance (12 > 10)
