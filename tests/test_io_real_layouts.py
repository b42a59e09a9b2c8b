"""Open exchange layouts read without a mapping, and the rules real files need (README.md#input-lab-results).

Sources of the check values:
* tests/data/wqp_narrowresult_orsanco_nps_2024_metals.csv: a real Water Quality Portal narrowResult
  download (origin in tests/data/README.md). Its "Hardness, Ca, Mg" row of activity
  ``31ORWUNT_WQX-OR4495M:20240523:1330:SRR`` reads 144 mg/L (file line 41), and that activity
  started at ``ActivityStartTime/Time`` 13:30:00 EDT on 5/23/2024 (same line).
* USGS parameter codes 01049 "Lead, water, filtered, micrograms per liter", 01051 "Lead, water,
  unfiltered, recoverable, micrograms per liter", 00900 "Hardness, water, milligrams per liter as
  calcium carbonate": seen in the header of a NWISWeb download (src/tracescreen/data/
  nwis_parameters.yaml, source qwdata_header). NWIS column names site_no, sample_dt, sample_tm,
  parm_cd, remark_cd, result_va, rpt_lev_va: the NWIS water-quality "rdb" layout (same header
  file; from memory for rpt_lev_va). The result values in the NWIS-layout file below are inputs only;
  what is checked is what the codes mean.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pandas as pd
from lab_files import write_csv

from tracescreen.io.loading import LoadOptions, load_results

DATA = Path(__file__).parent / "data"
WQP = DATA / "wqp_narrowresult_orsanco_nps_2024_metals.csv"


def test_wqp_hardness_row_becomes_the_hardness_of_its_sample():
    loaded = load_results([WQP], LoadOptions(date_order="mdy"))
    acc = loaded.accepted
    sample = acc[acc["sample_id"].astype(str) == "31ORWUNT_WQX-OR4495M:20240523:1330:SRR"]
    assert len(sample) >= 2 and (sample["hardness_mg_L"] == 144.0).all()
    aside = loaded.set_aside.set_index("row")
    assert "hardness result" in aside.loc[41, "reason"]  # set aside, not rejected as an unknown analyte
    other = acc[acc["sample_id"].astype(str) == "31ORWUNT_WQX-OR640M:20240521:1030:SRR"]
    assert other["hardness_mg_L"].isna().all()  # no hardness row for that sample in the extract


def test_wqp_date_and_time_columns_make_one_local_date_time():
    loaded = load_results([WQP], LoadOptions(date_order="mdy"))
    acc = loaded.accepted.set_index("row")
    assert acc.loc[3, "sampled_at"] == pd.Timestamp("2024-05-23 13:30:00")  # EDT kept as local clock time


NWIS_HEAD = "agency_cd,site_no,sample_dt,sample_tm,medium_cd,parm_cd,remark_cd,result_va,rpt_lev_va\n"


def test_nwis_parameter_codes_give_analyte_fraction_and_unit(tmp_path):
    body = ("USGS,01491000,2019-06-04,1030,WS,01049,,3.2,0.02\n"
            "USGS,01491000,2019-06-04,1030,WS,01051,<,0.05,0.05\n"
            "USGS,01491000,2019-06-04,1030,WS,00900,,120,\n"
            "USGS,01491000,2019-06-04,1030,WS,00618,,1.5,\n")
    loaded = load_results([write_csv(tmp_path, NWIS_HEAD + body)])
    acc = loaded.accepted.sort_values("row")
    assert list(acc["analyte"].astype(str)) == ["lead", "lead"]
    assert list(acc["fraction"].astype(str)) == ["dissolved", "total"]  # filtered = dissolved
    assert acc["value_ug_L"].iloc[0] == 3.2 and not acc["detected"].iloc[1]  # remark '<': a non-detect
    assert acc["detection_limit_ug_L"].iloc[1] == 0.05
    assert (acc["hardness_mg_L"] == 120.0).all()  # parameter 00900 is the sample's hardness
    assert acc["sampled_at"].iloc[0] == pd.Timestamp("2019-06-04 10:30")
    # 00618 (nitrate) is not a metal: set aside, not rejected
    assert len(loaded.rejected) == 0 and len(loaded.set_aside) == 2


def test_unit_with_species_suffix(tmp_path):
    """'ug/L as Cr' is µg/L of chromium (NWIS 01032 "micrograms per liter as Cr"); a unit 'as N'
    on a metal would need a molar-mass conversion and is rejected with that reason."""
    head = "site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
    body = "S1,A,2021-03-04,Chromium,total,12,ug/L as Cr\nS1,B,2021-03-04,Lead,total,1,mg/L as N\n"
    loaded = load_results([write_csv(tmp_path, head + body)])
    assert loaded.accepted["value_ug_L"].tolist() == [12.0]
    assert "species other than the element" in loaded.rejected["reason"].iloc[0]


def test_detected_zero_is_not_silently_meets(tmp_path):
    """A detected 0 (the "none found" convention of old records, common practice) is a non-detect at
    the detection limit when one is given, and set aside when none is."""
    head = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit\n"
    body = "S1,A,2021-03-04,Lead,total,0,ug/L,0.5\nS1,B,2021-03-04,Lead,total,0,ug/L,\n"
    loaded = load_results([write_csv(tmp_path, head + body)])
    acc = loaded.accepted
    assert acc["sample_id"].astype(str).tolist() == ["A"] and not acc["detected"].iloc[0]
    assert acc["detection_limit_ug_L"].iloc[0] == 0.5
    assert len(loaded.set_aside) == 1 and "none found" in loaded.set_aside["reason"].iloc[0]
    assert len(loaded.rejected) == 0


def test_utc_offsets_and_zone_names_keep_the_local_clock_time(tmp_path):
    """23:30 at UTC-05:00 on 4 March is sampled on 4 March local time (converting to UTC would move
    it to 5 March, and into another compliance period)."""
    head = "site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
    body = ("S1,A,2021-03-04T23:30:00-05:00,Lead,total,1,ug/L\nS1,B,2021-03-04 23:30 EST,Lead,total,1,ug/L\n"
            "S1,C,2021-03-04T23:30:00Z,Lead,total,1,ug/L\n")
    acc = load_results([write_csv(tmp_path, head + body)]).accepted
    assert (acc["sampled_at"] == pd.Timestamp("2021-03-04 23:30")).all() and len(acc) == 3


def test_workbook_time_cells_and_a_helper_sheet(tmp_path):
    """Excel date, date-time and time cells in any combination; a sheet without the required columns
    is skipped with a note naming it, and the data sheet is read."""
    from openpyxl import Workbook

    wb = Workbook()
    notes = wb.active
    notes.title = "Read me"
    notes.append(["Site", "Analyte", "Comment"])  # looks like a table, but has no result or date
    notes.append(["S1", "Lead", "sampled by hand"])
    data = wb.create_sheet("Results")
    data.append(["Site", "Sample ID", "Sample Date", "Sample Time", "Analyte", "Fraction", "Result", "Units"])
    data.append(["S1", "A1", dt.datetime(2021, 3, 4), dt.time(9, 15), "Lead", "Total", 2.0, "ug/L"])
    data.append(["S1", "A2", dt.date(2021, 3, 5), "14:05", "Lead", "Total", 3.0, "ug/L"])
    data.append(["S1", "A3", dt.datetime(2021, 3, 6, 8, 0), None, "Lead", "Total", 4.0, "ug/L"])
    p = tmp_path / "lab.xlsx"
    wb.save(p)
    loaded = load_results([p])
    acc = loaded.accepted.sort_values("row")
    assert list(acc["sampled_at"]) == [pd.Timestamp("2021-03-04 09:15"), pd.Timestamp("2021-03-05 14:05"),
                                       pd.Timestamp("2021-03-06 08:00")]
    assert any("sheet 'Read me' skipped" in w for w in loaded.warnings)
    assert set(loaded.files["sheet"]) == {"Results"}
