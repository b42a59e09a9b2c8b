"""USGS NWIS water-quality columns read without a mapping: parameter names, reporting levels,
medium codes and data-quality indicators.

Code meanings and their sources (each in the data file named):
* parameter names "Lead, water, filtered, micrograms per liter", "..., unfiltered, recoverable,
  ...", short-name words wf / wu: data/fractions.yaml (nwis_names, nwis_short);
* rpt_lev_cd LRL "laboratory reporting level", DLDQC "detection limit by DQCALC":
  data/limit_types.yaml (inldata documentation);
* medium_cd WS surface water, WSQ surface-water QC sample, OAQ blank for QC: data/media.yaml
  (inldata documentation); SB bed sediment: from memory (data/media.yaml says so);
* dqi_cd R "reviewed and accepted", S provisional, A historical: data/result_status.yaml (inldata
  documentation and the Water Quality Portal's NWIS loader: R -> Accepted); Q "reviewed and
  rejected": from memory;
* sample_type_cd 9 regular, 7 replicate, 2 blank: data/sample_types.yaml;
* val_qual_tx '@' holding time exceeded: data/qualifiers.yaml (usgs_val_qual).
The result values in the file below are inputs only; what is checked is what the codes mean.
"""

from __future__ import annotations

from lab_files import write_csv

from tracescreen.io.loading import load_results

HEAD = "agency_cd,site_no,sample_dt,sample_tm,medium_cd,sample_type_cd,parm_nm,remark_cd,result_va,rpt_lev_va,rpt_lev_cd,dqi_cd,val_qual_tx\n"


def _load(tmp_path, body: str):
    return load_results([write_csv(tmp_path, HEAD + body)])


def test_parameter_names_give_analyte_fraction_and_unit(tmp_path):
    body = ('USGS,0101,2019-06-04,1030,WS,9,"Lead, water, filtered, micrograms per liter",,3.2,0.02,LRL,R,\n'
            'USGS,0101,2019-06-04,1030,WS,9,"Lead, water, unfiltered, recoverable, micrograms per liter",,4.1,0.04,LRL,R,\n'
            'USGS,0101,2019-06-04,1030,WS,9,"Zinc, wf",,7,2,LRL,R,\n')
    loaded = _load(tmp_path, body.replace('"Zinc, wf",,7', '"Zinc, wf, micrograms per liter",,7'))
    acc = loaded.accepted.sort_values("row")
    assert list(acc["analyte"].astype(str)) == ["lead", "lead", "zinc"]
    assert list(acc["fraction"].astype(str)) == ["dissolved", "total", "dissolved"]
    assert list(acc["value_ug_L"]) == [3.2, 4.1, 7.0]


def test_reporting_level_with_remark_less_than(tmp_path):
    """remark '<' with result_va 0.05 and rpt_lev_va 0.05 (LRL): a non-detect at 0.05; a detected
    0.03 under an LRL of 0.05 is estimated (below the reporting level)."""
    body = ('USGS,0101,2019-06-04,1030,WS,9,"Lead, water, filtered, micrograms per liter",<,0.05,0.05,LRL,R,\n'
            'USGS,0101,2019-06-05,1030,WS,9,"Lead, water, filtered, micrograms per liter",,0.03,0.05,LRL,R,\n')
    acc = _load(tmp_path, body).accepted.sort_values("row")
    assert not acc["detected"].iloc[0] and acc["detection_limit_ug_L"].iloc[0] == 0.05
    assert acc["detected"].iloc[1] and acc["qualifier_meaning"].iloc[1] == "detected_estimated"


def test_dqi_r_is_reviewed_and_accepted_not_rejected(tmp_path):
    """Regression: NWIS dqi_cd R means reviewed and accepted; only Q (reviewed and rejected) sets a
    result aside."""
    body = ('USGS,0101,2019-06-04,1030,WS,9,"Lead, water, filtered, micrograms per liter",,12,0.02,LRL,R,\n'
            'USGS,0101,2019-06-05,1030,WS,9,"Lead, water, filtered, micrograms per liter",,12,0.02,LRL,S,\n'
            'USGS,0101,2019-06-06,1030,WS,9,"Lead, water, filtered, micrograms per liter",,12,0.02,LRL,Q,\n')
    loaded = _load(tmp_path, body)
    assert len(loaded.accepted) == 2 and len(loaded.set_aside) == 1
    assert "review status 'Q' (reviewed and rejected)" in loaded.set_aside["reason"].iloc[0]


def test_medium_codes(tmp_path):
    """WSQ with sample type 7 is a field replicate; WSQ with type 9 is QC of unstated kind (set
    aside); OAQ with type 2 is a blank; SB (bed sediment) is not water (set aside)."""
    body = ('USGS,0101,2019-06-04,1030,WS,9,"Lead, water, filtered, micrograms per liter",,3,0.02,LRL,R,\n'
            'USGS,0101,2019-06-04,1031,WSQ,9,"Lead, water, filtered, micrograms per liter",,3,0.02,LRL,R,\n'
            'USGS,0101,2019-06-04,1032,OAQ,2,"Lead, water, filtered, micrograms per liter",<,0.02,0.02,LRL,R,\n'
            'USGS,0101,2019-06-04,1033,SB,9,"Lead, water, filtered, micrograms per liter",,3,0.02,LRL,R,\n')
    loaded = _load(tmp_path, body)
    acc = loaded.accepted.sort_values("row")
    assert list(acc["sample_type"].astype(str)) == ["sample", "field_blank"]
    reasons = loaded.set_aside.sort_values("row")["reason"].tolist()
    assert "quality-control sample of unstated kind (medium 'WSQ')" in reasons[0]
    assert "medium 'SB' is not water" in reasons[1]


def test_value_qualifier_codes(tmp_path):
    body = 'USGS,0101,2019-06-04,1030,WS,9,"Lead, water, filtered, micrograms per liter",,3,0.02,LRL,R,@\n'
    acc = _load(tmp_path, body).accepted
    assert acc["qualifier_meaning"].iloc[0] == "holding_time"
