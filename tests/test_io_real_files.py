"""Real public files read right: a laboratory deliverable with its lab QC rows (CSV, and the same
rows in a workbook), USGS Samples data (WQX 3 names) and a Water Quality Portal result-profile file.

Every check value below is read off the fixture file named (origin in tests/data/README.md), by
its line number in the file (the header is line 1); what a code means comes from the vocabulary
files under src/tracescreen/data/, each code with its source:

* SGS deliverable, work order 1231846 (Kenai River baseline, spring 2023), two CSV parts of the
  same EDD with different header spellings (``RUN_DATE`` vs ``RUN_DATE_TIME``, ``PERCENT_RECOVERY``
  vs ``PERCENT_RECOVERED``). Its own layout is read with the short mapping
  tests/data/lab_edd_kenai_sgs_columns.yaml (ours).
* USGS Samples (tests/data/usgs_samples_results_black_earth_creek_2023.csv): nutrients and field
  readings only, so every row is set aside; the two 'Not Detected' ammonia rows carry
  DetectionLimit_TypeA 'Censoring Level' 0.026 and 0.02 mg/L.
* WQP result profile (tests/data/wqp_result_profile_widnr_2011_extract.csv): five 'Field Msr/Obs'
  specific-conductance rows.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.io.mapping import load_column_map

DATA = Path(__file__).parent / "data"
PART1 = DATA / "lab_edd_kenai_sgs_1231846_rev1_part1_extract.csv"
PART2 = DATA / "lab_edd_kenai_sgs_1231846_rev1_part2_extract.csv"
SGS_COLUMNS = DATA / "lab_edd_kenai_sgs_columns.yaml"
USGS = DATA / "usgs_samples_results_black_earth_creek_2023.csv"
WQP_RESULT = DATA / "wqp_result_profile_widnr_2011_extract.csv"


def _raw(path: Path) -> pd.DataFrame:
    return pd.read_csv(path, dtype=str, keep_default_na=False)


def _sgs(*paths: Path):
    return load_results(list(paths), LoadOptions(column_map=load_column_map(SGS_COLUMNS)))


def _conserved(loaded, n_rows: int) -> None:
    assert len(loaded.accepted) + len(loaded.set_aside) + len(loaded.rejected) == n_rows
    f = loaded.files
    assert (f["rows_read"] == f["accepted"] + f["set_aside"] + f["rejected"]).all()


def test_lab_deliverable_part2_statuses_and_counts():
    """45 data lines: 17 lab QC lines (MS, MSD, CB, CCV, ICB, ICV, OS x2, LCS x3, LCSD, LLQC, MB x2,
    QCS), 28 client-sample (PS) lines of which 2 are nutrients (total phosphorus, nitrate+nitrite)."""
    raw = _raw(PART2)
    loaded = _sgs(PART2)
    _conserved(loaded, len(raw) == 45 and 45)
    assert len(loaded.rejected) == 0  # nothing in a clean deliverable needs attention
    aside = loaded.set_aside.set_index("row")
    qc_lines = set(np.flatnonzero(raw["SAMPLE_TYPE"] != "PS") + 2)
    assert len(qc_lines) == 17 and qc_lines <= set(aside.index)
    # the two method blanks (MB, lines 16-17) have no site or date: lab QC, not errors
    assert aside.loc[[16, 17], "reason"].str.contains("laboratory blank without a site").all()
    assert aside.loc[[19, 20], "reason"].str.contains("not in the analyte registry").all()  # nutrients
    acc = loaded.accepted
    assert len(acc) == 26 and (acc["fraction"].astype(str) == "dissolved").all()  # DISSOLVED 'L'


def test_lab_deliverable_nondetects_limits_and_estimates():
    """RESULT 0 with RESULTFLAG 'U ' is a non-detect at REPDL (LIMIT_DEFINITION LOD); LOQ is the
    quantitation limit; a value between them is detected, estimated."""
    acc = _sgs(PART2).accepted.set_index("row")
    # line 21: RM 0 - No Name Creek, arsenic, 0 'U ', REPDL 2.5 LOD, LOQ 5
    assert not acc.loc[21, "detected"] and acc.loc[21, "detection_limit_ug_L"] == 2.5
    assert acc.loc[21, "quantitation_limit_ug_L"] == 5.0 and acc.loc[21, "qualifier_meaning"] == "nondetect"
    # line 24: copper 2.95 'J ' (REPDL 1.5, LOQ 3): detected, estimated
    assert acc.loc[24, "detected"] and acc.loc[24, "value_ug_L"] == 2.95
    assert acc.loc[24, "qualifier_meaning"] == "detected_estimated"
    # line 33: RM 1.5 copper 150 '= ' (LOQ 3): detected, not estimated ('=' translated to no qualifier)
    assert acc.loc[33, "value_ug_L"] == 150.0 and acc.loc[33, "qualifier_meaning"] == ""
    # line 22: cadmium 0.595 '= ' is above LOQ 0.5: not estimated
    assert acc.loc[22, "qualifier_meaning"] == ""
    # line 43: RM 12.5 Pillars copper 1.45 'J ' is below REPDL 1.5 (LOD): the lab says detected
    assert acc.loc[43, "detected"] and acc.loc[43, "value_ug_L"] == 1.45


def test_lab_deliverable_sample_names_give_site_duplicate_and_blank():
    """Site, field duplicate (with its parent) and field blank are derived from the free-text
    SAMPLE_ID ('RM 1.5 - Kenai City Dock - DUP', 'RM 0 - No Name Creek-FB',
    'RM 12.5 - Pillars - FieldBlank', 'RM 12.5 Pillars')."""
    acc = _sgs(PART2).accepted.set_index("row")
    assert acc.loc[33, "site_id"] == "RM 1.5" and acc.loc[33, "sample_type"] == "sample"
    assert acc.loc[38, "sample_type"] == "field_duplicate" and acc.loc[38, "value_ug_L"] == 276.0
    assert acc.loc[38, "parent_sample_id"] == "RM 1.5 - Kenai City Dock" == acc.loc[33, "sample_id"]
    assert acc.loc[28, "sample_type"] == "field_blank" and acc.loc[28, "site_id"] == "RM 0"
    assert acc.loc[41, "sample_type"] == "field_blank" and acc.loc[43, "sample_type"] == "sample"
    assert acc.loc[43, "site_id"] == acc.loc[41, "site_id"] == "RM 12.5"
    assert acc.loc[21, "sampled_at"] == pd.Timestamp("2023-05-03 10:30")  # COLLECT_DATE, month first
    assert acc.loc[21, "analysed_at"] == pd.Timestamp("2023-05-19 20:08")  # RUN_DATE_TIME
    assert acc.loc[21, "batch"] == "MMS11929" and acc.loc[21, "lab"] == "SGS North America, Anchorage"


def test_lab_qc_rows_keep_spike_recovery_and_limits():
    """The lab QC rows set aside keep what they were read as (line 3: MS, lead, 1010 µg/L, batch
    MMS11929) and every original cell, the spike amount, recovery and control limits among them
    (line 3: AMOUNT_SPIKED 1000, PERCENT_RECOVERED 101, REC_LIMIT_LOW 70, REC_LIMIT_HIGH 130;
    line 2: MSD nitrate SAMPLE_RPD 0.087, RPD_LIMIT_HIGH 25), for the lab-QC review."""
    aside = _sgs(PART2).set_aside.set_index("row")
    ms = aside.loc[3]
    assert ms["sample_type"] == "MS" and ms["analyte"] == "lead" and ms["value_ug_L"] == 1010.0
    assert ms["batch"] == "MMS11929" and ms["unit"] == "ug/L"
    assert (ms["AMOUNT_SPIKED"], ms["PERCENT_RECOVERED"], ms["REC_LIMIT_LOW"], ms["REC_LIMIT_HIGH"]) == \
        ("1000", "101", "70", "130")
    assert (aside.loc[2, "SAMPLE_RPD"], aside.loc[2, "RPD_LIMIT_HIGH"]) == ("0.087", "25")
    assert aside.loc[3, "SAMPLE_ID"] == "1712984 MS FOR [MXX35860]"


def test_lab_deliverable_part1_other_header_spellings():
    """Part 1 of the same deliverable spells some headers differently (RUN_DATE, PERCENT_RECOVERY);
    the same mapping reads it. Line 7: 'RM 0-NO NAME CREEK-FB' copper 0 U at REPDL 2.0 (unit
    'ug/l'); line 15: the field blank of RM 12.5 has calcium 10700 µg/L detected."""
    raw = _raw(PART1)
    loaded = _sgs(PART1)
    _conserved(loaded, len(raw))
    assert len(loaded.rejected) == 0 and len(loaded.set_aside) == 0 and len(loaded.accepted) == 21
    acc = loaded.accepted.set_index("row")
    assert acc.loc[7, "sample_type"] == "field_blank" and not acc.loc[7, "detected"]
    assert acc.loc[7, "detection_limit_ug_L"] == 2.0 and acc.loc[7, "fraction"] == "total"
    assert acc.loc[16, "sample_type"] == "field_blank" and acc.loc[16, "value_ug_L"] == 10700.0
    assert acc.loc[13, "sample_type"] == "field_duplicate" and acc.loc[13, "parent_sample_id"] == "RM 1.5-KENAI CITY DOCK"
    assert acc.loc[2, "analysed_at"] == pd.Timestamp("2023-05-22 11:15")  # RUN_DATE


def test_lab_deliverable_without_a_mapping_says_what_is_missing():
    """Without its mapping the lab's own layout is read as far as it can be, and every row says
    why it is not accepted (no site column, no fraction column): never a traceback."""
    loaded = load_results([PART2], LoadOptions(date_order="mdy"))
    _conserved(loaded, 45)
    assert len(loaded.accepted) == 0
    assert loaded.rejected["reason"].str.contains("site_id is empty").all()
    assert any("'DL', 'LOD' all look like detection_limit" in w for w in loaded.warnings)
    assert any("'SAMPLE_ID', 'LAB_SAMPLE_ID' all look like sample_id" in w for w in loaded.warnings)


def test_lab_deliverable_as_a_workbook(tmp_path):
    """The same deliverable as an XLSX workbook (numbers as number cells, dates as date cells), with
    a notes sheet first: the notes sheet is skipped with a warning and the rows read as from CSV."""
    from openpyxl import Workbook

    raw = _raw(PART2)
    wb = Workbook()
    wb.active.title = "Notes"
    wb.active.append(["Work order 1231846", "Kenai River Baseline"])
    ws = wb.create_sheet("Sheet8")
    ws.append(list(raw.columns))
    for rec in raw.itertuples(index=False):
        cells = []
        for h, v in zip(raw.columns, rec):
            if h in ("COLLECT_DATE", "REC_DATE", "RUN_DATE_TIME", "EXTRACTED_DATE") and v:
                cells.append(dt.datetime.strptime(v, "%m/%d/%Y %H:%M"))
            elif h in ("RESULT", "REPDL", "LOQ", "AMOUNT_SPIKED", "PERCENT_RECOVERED") and v:
                cells.append(float(v))
            else:
                cells.append(v or None)
        ws.append(cells)
    p = tmp_path / "1231846_FC5912_Rev1.xlsx"
    wb.save(p)
    from_xlsx = _sgs(p)
    from_csv = _sgs(PART2)
    assert any("sheet 'Notes' skipped" in w for w in from_xlsx.warnings)
    cols = ["row", "site_id", "sample_id", "sampled_at", "analyte", "fraction", "value_ug_L", "detected",
            "detection_limit_ug_L", "quantitation_limit_ug_L", "qualifier_meaning", "sample_type"]
    a = from_xlsx.accepted[cols].astype(str).reset_index(drop=True)
    b = from_csv.accepted[cols].astype(str).reset_index(drop=True)
    pd.testing.assert_frame_equal(a, b)
    assert len(from_xlsx.set_aside) == len(from_csv.set_aside) == 19


def test_usgs_samples_wqx3_layout_reads_without_a_mapping():
    """USGS Samples names (Location_Identifier, Activity_StartDate, Result_Measure,
    DetectionLimit_TypeA ...) are recognised; every row is a nutrient, flow or field reading, so
    all 6 are set aside and none rejected (the two 'Not Detected' rows have their 'Censoring Level'
    limits, so they are not 'non-detect without a limit' errors)."""
    loaded = load_results([USGS])
    _conserved(loaded, 6)
    assert len(loaded.rejected) == 0 and len(loaded.set_aside) == 6
    aside = loaded.set_aside.set_index("row")
    assert aside.loc[6, "analyte"] == "Ammonia and ammonium" and not aside.loc[6, "detected"]
    assert aside.loc[6, "detection_limit_ug_L"] == 26.0  # Censoring Level 0.026 mg/L
    assert aside.loc[7, "detection_limit_ug_L"] == 20.0  # Censoring Level 0.02 mg/L (TypeA), DQCALC 0.02 (TypeB)


@pytest.mark.parametrize("spelling", ["/", "."])
def test_wqp_result_profile_both_header_spellings(tmp_path, spelling):
    """The WQP result profile read with its own '/' headers, and with '.' as some readers write
    them (ResultMeasure.MeasureUnitCode): the same columns are recognised either way."""
    text = WQP_RESULT.read_text(encoding="utf-8")
    head, body = text.split("\n", 1)
    p = tmp_path / "result.csv"
    p.write_text(head.replace("/", spelling) + "\n" + body, encoding="utf-8")
    loaded = load_results([p])
    _conserved(loaded, 5)
    aside = loaded.set_aside
    assert len(aside) == 5 and len(loaded.rejected) == 0
    # 'Field Msr/Obs' is a field measurement, and specific conductance is not a metal
    assert aside["reason"].str.contains("field measurement").all()
    assert aside["unit"].eq("uS/cm").all() and aside["sample_type"].eq("Field Msr/Obs").all()


def test_lab_deliverable_screens_with_hardness_from_its_calcium_and_magnesium():
    """Screened against the shipped US EPA aquatic-life table: RM 23 (part 1, lines 17 and 21)
    reports calcium 15400 and magnesium 5470 µg/L, so its hardness is 2.497·15.4 + 4.118·5.47 =
    60.98 mg/L (Standard Methods 2340 B); its total copper, not detected at 2.0 µg/L (line 19), is
    within the dissolved copper criteria at that hardness (a total at or below a dissolved
    criterion meets it); dissolved arsenic not detected at 2.5 µg/L (part 2, line 21) is below
    150 µg/L (chronic, NRWQC)."""
    from tracescreen.limits.load import load_limits
    from tracescreen.screening.screen import screen

    loaded = _sgs(PART1, PART2)
    out = screen(loaded.accepted, load_limits(Path(__file__).resolve().parents[1] / "limits" /
                                              "us_epa_nrwqc_freshwater_aquatic_life.yaml"))
    cu = out[(out["file"].astype(str) == PART1.name) & (out["row"] == 19)]
    assert len(cu) == 2 and (cu["status"] == "nondetect_meets").all()
    assert cu["hardness_used_mg_L"].iloc[0] == pytest.approx(2.497 * 15.4 + 4.118 * 5.47)
    arsenic = out[(out["file"].astype(str) == PART2.name) & (out["row"] == 21)].set_index("duration")
    assert arsenic.loc["chronic", "limit_ug_L"] == 150.0 and arsenic.loc["chronic", "status"] == "nondetect_meets"
    # blanks and duplicates are QC, never findings
    assert (out.loc[out["sample_type"].astype(str) != "sample", "status"] == "qc_sample").all()


def test_r_written_deliverable_na_cells_are_empty(tmp_path):
    """tests/data/bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv (origin in tests/data/README.md) writes
    R's NA for empty cells: a non-detect is result_value NA with lab_qualifiers U, censored at its
    method_detection_limit. Read with a short mapping, no row is rejected for 'NA'."""
    path = DATA / "bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv"
    raw = _raw(path)
    cm_text = ("columns:\n  SiteID: site_id\n  sys_sample_code: sample_id\n  sample_date: sampled_at\n"
               "  chemical_name: analyte\n  result_value: result\n  result_unit: unit\n"
               "  method_detection_limit: detection_limit\n  lab_qualifiers: qualifier\n"
               "  sample_type_code: sample_type\n  lab_sdg: batch\n")
    p = tmp_path / "columns.yaml"
    p.write_text(cm_text, encoding="utf-8")
    loaded = load_results([path], LoadOptions(column_map=load_column_map(p), date_order="mdy"))
    _conserved(loaded, len(raw))
    assert len(loaded.rejected) == 0
    acc = loaded.accepted.set_index("row")
    nd = [r for r in acc.index if raw.loc[r - 2, "lab_qualifiers"] == "U"]
    assert nd and not acc.loc[nd, "detected"].any()
    mdl = raw.loc[[r - 2 for r in nd], "method_detection_limit"].astype(float).to_numpy()
    assert (acc.loc[nd, "detection_limit_ug_L"].to_numpy() == mdl).all()  # ug/l in this file
