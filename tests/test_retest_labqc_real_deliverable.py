"""Real laboratory QC rows: a public laboratory deliverable with MS/MSD, LCS/LCSD and blank rows.

File: tests/data/bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv (origin in tests/data/README.md): rows
of NYSDEC's 2018 Ramapo River survey as delivered by the laboratory (SDG R1809466), metals by EPA
200.7 / 200.8, each QC row with the laboratory's own amounts, recoveries, limits (qc_spike_lcl /
qc_spike_ucl = 70 / 130 %, qc_rpd_cl = 20 %) and status flag (``*`` = outside).

The checks compare the review with the laboratory's own figures in the same file:
* recoveries recomputed from the printed amounts, 100 (spiked - unspiked) / added (SW-846 1312),
  agree with the printed recoveries within 0.5 percentage point (the lab prints whole percent,
  from unrounded amounts; the amounts are printed to 3 significant figures);
* MS/MSD RPDs recomputed from the two printed results agree with the printed RPD within 0.5;
* the verdicts against the lab's limits agree with the lab's status flags, except where the
  guideline does not judge a spike (sample > 4 x spike: NFG 2020, memory).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from tracescreen.io.columns import ColumnMap
from tracescreen.io.loading import LoadOptions, load_results
from tracescreen.retest.labqc.review import qc_table, review_lab_qc

DATA = Path(__file__).parent / "data" / "bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv"
MAPPING = ColumnMap({"SiteID": "site_id", "sys_sample_code": "sample_id", "sample_date": "sampled_at",
                     "chemical_name": "analyte", "result_value": "result", "result_unit": "unit",
                     "method_detection_limit": "detection_limit", "lab_qualifiers": "qualifier",
                     "sample_type_code": "sample_type", "lab_sdg": "batch", "lab_name_code": "lab",
                     "analysis_date": "analysed_at"})


@pytest.fixture(scope="module")
def loaded():
    return load_results([DATA], LoadOptions(column_map=MAPPING, date_order="mdy"))


@pytest.fixture(scope="module")
def qc(loaded):
    return qc_table(loaded.set_aside, loaded.accepted, column_map=MAPPING, date_order="mdy")


@pytest.fixture(scope="module")
def review(loaded, qc):
    return review_lab_qc(loaded.accepted, qc)


def test_the_qc_rows_are_read_from_the_rows_the_loader_set_aside(loaded, qc):
    # 55 data rows; the loader sets aside 37 (QC samples, hardness, Na and K): 34 of them are lab QC
    assert int(loaded.files["rows_read"].sum()) == 55
    assert len(loaded.set_aside) == 37
    assert qc["element"].value_counts().to_dict() == {"msd": 20, "ms": 11, "method_blank": 1, "lcsd": 1, "lcs": 1}
    assert set(qc["batch"]) == {"R1809466"} and set(qc["lab"]) == {"ALSRNY"}
    ca = qc[(qc["element"] == "ms") & (qc["analyte"] == "calcium")].iloc[0]
    assert (ca["result_ug_L"], ca["original_ug_L"], ca["spike_added_ug_L"]) == (44500.0, 43100.0, 2000.0)
    assert (ca["recovery_low"], ca["recovery_high"], ca["lab_flag"], ca["technique"]) == (70.0, 130.0, "*", "icp_aes")


def test_recoveries_agree_with_the_labs_own(review):
    v = review.verdicts[review.verdicts["element"].isin(["ms", "msd", "lcs", "lcsd"])]
    judged = v[v["verdict"] != "not_judged"]
    diff = (judged["value"] - judged["reported_value"]).abs()
    assert len(judged) == 27                            # 31 spikes + LCS + LCSD, 6 spikes not judged
    assert diff.max() <= 0.5 + 1e-9
    # every spike row, judged or not: the printed amounts give the printed recovery
    spikes = review.qc[review.qc["element"].isin(["ms", "msd"])]
    computed = 100 * (spikes["result_ug_L"] - spikes["original_ug_L"]) / spikes["spike_added_ug_L"]
    assert (computed - spikes["reported_recovery"]).abs().max() <= 0.5 + 1e-9


def test_spike_duplicate_rpds_agree_with_the_labs_own(review):
    v = review.verdicts[review.verdicts["element"].isin(["ms_msd", "lcs_lcsd"])]
    recomputed = v[v["detail"].str.startswith(("MS ", "LCS "))]
    assert len(v) == 21 and len(recomputed) == 12          # 9 MSD rows have no MS row in the extract
    assert (recomputed["value"] - recomputed["reported_value"]).abs().max() <= 0.5 + 1e-9
    assert (v["verdict"] == "within").all()


def test_verdicts_agree_with_the_labs_status_flags(review, qc):
    v = review.verdicts
    counts = v["verdict"].value_counts().to_dict()
    assert counts == {"within": 49, "not_judged": 6}
    flagged = qc.loc[qc["lab_flag"] == "*", ["row"]].merge(v, on="row")
    # the lab flags one spike: calcium MS, printed 70 % against its 70 % limit; the sample (43100 ug/L)
    # is 21.6 x the spike (2000 ug/L), so the guideline does not judge it
    assert flagged[["analyte", "element", "verdict"]].values.tolist() == [["calcium", "ms", "not_judged"]]
    judged = v[v["verdict"] != "not_judged"].merge(qc[["row", "lab_flag"]], on="row")
    assert (judged["lab_flag"] == "").all() and (judged["verdict"] == "within").all()
    nj = v[v["verdict"] == "not_judged"]
    # sodium is not in the registry: kept as written in the mapped chemical_name column (a mapped
    # header wins over the auto-recognised cas_rn, README.md#column-mapping---columns-file)
    assert sorted(set(nj["analyte"])) == ["Sodium", "calcium", "magnesium"]


def test_the_field_results_of_the_batch_are_linked_and_not_qualified(tmp_path):
    # the loader reads R's "NA" cells as text today (reported to the lead); a copy with NA cells
    # emptied gives the field results, byte-identical otherwise
    copy = tmp_path / DATA.name
    with DATA.open(newline="") as src, copy.open("w", newline="") as dst:
        w = csv.writer(dst, quoting=csv.QUOTE_MINIMAL)
        for row in csv.reader(src):
            w.writerow(["" if c == "NA" else c for c in row])
    loaded = load_results([copy], LoadOptions(column_map=MAPPING, date_order="mdy"))
    field = loaded.accepted[loaded.accepted["sample_type"].astype(str) == "sample"]
    assert len(field) >= 15
    rev = review_lab_qc(loaded.accepted, qc_table(loaded.set_aside, loaded.accepted, column_map=MAPPING,
                                                  date_order="mdy"))
    assert (rev.qualified["lab_qc_qualifier"] == "").all()
    assert rev.retest.empty
    b = rev.batches.set_index("batch").loc["R1809466"]
    assert b["results"] == len(field) and b["outside"] == 0 and b["not_judged"] == 6
    assert "Every judged QC value was within its window" in b["narrative"]
    assert "continuing calibration verification" in b["elements_absent"]
    assert np.isfinite(rev.qc["spike_added_ug_L"]).sum() >= 31
