"""The site summary report (tracescreen.report.tables, report.html): tables, workbook read-back, site selection, errors."""

import numpy as np
import openpyxl
import pandas as pd
import pytest
from flag_frames import screening

from tracescreen.caution import CAUTION
from tracescreen.cli import main
from tracescreen.report import html as report_html
from tracescreen.report import tables as report

SHEETS = ["caution", "scope", "files", "limit_tables", "limit_entries", "status_matrix", "exceedances",
          "summary", "exceedance_rates", "trends", "retest", "rejected", "method_notes"]


def _sheet(path, name) -> pd.DataFrame:
    ws = openpyxl.load_workbook(path, read_only=True)[name]
    rows = list(ws.iter_rows(values_only=True))
    return pd.DataFrame(rows[1:], columns=rows[0])


def test_workbook_has_one_sheet_per_table(demo_report):
    """The --xlsx workbook reads back with openpyxl: a first sheet with the cover, caution and summary,
    then one sheet per report table, the caution first."""
    wb = openpyxl.load_workbook(demo_report["xlsx"], read_only=True)
    assert wb.sheetnames[0] == "report"
    assert wb.sheetnames[1:len(SHEETS) + 1] == SHEETS
    assert _sheet(demo_report["xlsx"], "caution").iloc[0, 0] == CAUTION
    front = [r for r in wb["report"].iter_rows(values_only=True)]
    assert ("Caution", CAUTION) in front and front[0][0] == "Title"
    assert any(label == "Summary" and text.startswith("This report screens") for label, text in front)


def test_workbook_sheets_are_formatted(demo_report):
    """Every table sheet has its header row frozen, an autofilter over the table, widths set and a number
    format on decimal columns (openpyxl read-back)."""
    wb = openpyxl.load_workbook(demo_report["xlsx"])
    ws = wb["exceedances"]
    assert ws.freeze_panes == "A2"
    assert ws.auto_filter.ref == f"A1:{openpyxl.utils.get_column_letter(ws.max_column)}{ws.max_row}"
    head = [c.value for c in ws[1]]
    col = head.index("value_ug_L") + 1
    assert ws.cell(2, col).number_format.startswith("0.0")
    assert ws.column_dimensions["A"].width >= len("site_id")
    assert ws.cell(1, 1).font.bold


@pytest.mark.parametrize("name", ["retest", "rejected"])
def test_workbook_rows_equal_screen_csv(demo_report, demo_screen_dir, name):
    """The workbook's retest and rejected sheets hold the same rows as retest.csv / rejected.csv of `screen`."""
    csv = pd.read_csv(demo_screen_dir / f"{name}.csv", dtype=str, keep_default_na=False)
    sheet = _sheet(demo_report["xlsx"], name).fillna("").astype(str)
    assert list(sheet.columns) == list(csv.columns)
    assert len(sheet) == len(csv)
    pd.testing.assert_frame_equal(sheet.reset_index(drop=True), csv.reset_index(drop=True), check_dtype=False)


@pytest.mark.parametrize("name, csv_name", [("summary", "summary"), ("trends", "trends"),
                                            ("exceedance_rates", "exceedances")])
def test_workbook_statistics_equal_screen_csv(demo_report, demo_screen_dir, name, csv_name):
    """The workbook's summary, trends and exceedance-rate sheets equal summary.csv, trends.csv, exceedances.csv."""
    csv = pd.read_csv(demo_screen_dir / f"{csv_name}.csv")
    sheet = _sheet(demo_report["xlsx"], name)
    assert list(sheet.columns) == list(csv.columns) and len(sheet) == len(csv) > 0
    for c in csv.columns:
        if pd.api.types.is_numeric_dtype(csv[c]):
            np.testing.assert_allclose(sheet[c].astype(float), csv[c], rtol=1e-12, err_msg=c)
        else:
            assert (sheet[c].fillna("").astype(str) == csv[c].fillna("").astype(str)).all(), c


def test_workbook_exceedances_equal_screening_csv(demo_report, demo_screen_dir):
    """Every site-sample `exceeds` row of screening.csv is in the exceedances sheet, with equal value and limit."""
    scr = pd.read_csv(demo_screen_dir / "screening.csv")
    exc = scr[scr["status"].eq("exceeds")]
    sheet = _sheet(demo_report["xlsx"], "exceedances")
    key = ["site_id", "sample_id", "analyte", "fraction", "limit_table", "use"]
    exc = exc.fillna({"duration": ""}).sort_values(key + ["limit_ug_L"]).reset_index(drop=True)
    sheet = sheet.sort_values(key + ["limit_ug_L"]).reset_index(drop=True)
    assert len(sheet) == len(exc) > 0
    assert (sheet[key].astype(str).to_numpy() == exc[key].astype(str).to_numpy()).all()
    pd.testing.assert_series_equal(sheet["value_ug_L"].astype(float), exc["value_ug_L"], rtol=1e-12, check_names=False)
    pd.testing.assert_series_equal(sheet["limit_ug_L"].astype(float), exc["limit_ug_L"], rtol=1e-12, check_names=False)


def test_status_matrix_worst_status_and_counts():
    """A series with one exceedance in three results reads 'exceeds 1/3'; non-detects only reads 'nondetect_meets 2/2'."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=2),
            dict(sample_id="B", sampled_at="2024-04-01", value=12),
            dict(sample_id="C", sampled_at="2024-07-01", nd=True, detection_limit_ug_L=0.5),
            dict(sample_id="D", site_id="S2", sampled_at="2024-01-01", nd=True),
            dict(sample_id="E", site_id="S2", sampled_at="2024-04-01", nd=True),
            dict(sample_id="F", site_id="S2", sampled_at="2024-04-01", value=50, sample_type="field_blank")]
    m = report.status_matrix(screening(rows, [("who-dw", 10.0), ("eu-dw", 5.0)]))
    assert m.loc["S1", "lead (total)"] == "exceeds 1/3"
    assert m.loc["S2", "lead (total)"] == "nondetect_meets 2/2"  # the blank is QC: not counted


def test_limit_entries_show_value_or_hardness_formula(demo_report):
    """Limit entries used give a value in µg/L or the published hardness formula with its coefficients."""
    ent = _sheet(demo_report["xlsx"], "limit_entries")
    assert ent["limit"].str.endswith(" µg/L").any()
    assert ent["limit"].str.startswith("exp(").any()
    tables = _sheet(demo_report["xlsx"], "limit_tables")
    assert (tables["source"].str.len() > 20).all()  # a full citation, not a label


def test_site_selection(tmp_path, scenario_args):
    """--site restricts the tables to the chosen site; an unknown site is a one-line user error (exit 2)."""
    html, xlsx = tmp_path / "r.html", tmp_path / "r.xlsx"
    assert main(["report", *scenario_args, "--site", "KR02", "--bootstrap", "20", "--out", str(html),
                 "--xlsx", str(xlsx)]) == 0
    for name in ("exceedances", "retest", "status_matrix"):
        assert set(_sheet(xlsx, name)["site_id"]) == {"KR02"}
    assert main(["report", *scenario_args, "--site", "NOPE", "--out", str(html)]) == 2


def test_bad_retest_option_is_user_error(tmp_path, scenario_args, capsys):
    """A malformed --holding-time is reported in one line with exit code 2, not a traceback."""
    assert main(["screen", *scenario_args, "--holding-time", "mercury=soon", "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "holding time" in err[0]


def test_build_report_html_from_a_pipeline_run():
    """pipeline.run + report_data + build_report_html give a page with the caution first and computed summaries."""
    from conftest import ROOT, SCENARIO

    from tracescreen import pipeline
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions

    inputs = pipeline.Inputs(results=tuple(sorted(SCENARIO.glob("lab_results_fernleigh_*.csv"))),
                             limits=(ROOT / "limits", SCENARIO / "limits"), sites=SCENARIO / "sites.csv",
                             reading=LoadOptions(column_map=load_column_map(SCENARIO / "columns_eastbank.yaml")))
    res = pipeline.run(inputs, pipeline.Options(periods=False))
    data = report.report_data(res)
    page = report_html.build_report_html(data, site_ids=["KR02"])
    assert page.index(CAUTION) < page.index('<section id="grid">')
    assert 'id="summary-table"' in page and 'id="trends-table"' in page
    assert set(data.retest["site_id"]) <= set(res.sites["site_id"]) and len(data.retest)
    assert set(report.report_tables(data, ["KR02"])["summary"]["site_id"]) == {"KR02"}


def test_markup_in_data_is_escaped():
    """Text from lab files is shown as text: a sample id holding markup cannot add a script to the page (HTML escaping)."""
    import numpy as np

    rows = [dict(sample_id="<script>alert(1)</script>", sampled_at="2024-01-01", value=12.0)]
    scr = screening(rows)
    empty = pd.DataFrame({"table_id": [], "name": [], "source": [], "use": [], "unit": []})
    data = report.ReportData(scr, pd.DataFrame({"file": [], "row": [], "reason": []}),
                             pd.DataFrame({"file": ["lab.csv"], "sha256": ["0" * 64]}), empty,
                             pd.DataFrame({"table_id": [], "value_ug_L": np.array([], float)}), scr.iloc[:0])
    page = report_html.build_report_html(data)
    assert "<script>alert(1)" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page
