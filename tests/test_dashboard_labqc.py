"""The Lab QC page: its views equal the engine's own review of the demo scenario, and in a real
browser a reviewer picks a batch, clicks a QC value and sees the results it qualifies.

Check values: the engine's :func:`tracescreen.retest.labqc.review.review_load` on the same files
(the dashboard must show what the engine computes), and the demo QC summary's scripted events
(invented data, scenario_data/make_scenario.py QC_EVENTS): the cadmium LCS of FLB-2021-11 at 45 %
(below the guideline's 50 %: the batch's cadmium results R), the zinc MS/MSD of FLB-2022-08 at
62/64 % (30-74 %: J- / UJ).
"""

from __future__ import annotations

import pytest
from dashboard_support import SCENARIO, scenario_paths

QC = SCENARIO / "lab_qc_fernleigh_2021-2025.csv"


def _inputs():
    from dashboard.state.store import load_inputs

    p = scenario_paths()
    return load_inputs(p["results"], p["limits"], p["sites"], p["columns"], qc_files=[QC])


@pytest.fixture(scope="module")
def session():
    from dashboard.state.session import build_session

    return build_session(_inputs())


def _engine_review():
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions, load_results
    from tracescreen.io.sites import load_sites
    from tracescreen.retest.labqc.review import review_load

    p = scenario_paths()
    cm = load_column_map(p["columns"])
    loaded = load_results(p["results"], LoadOptions(column_map=cm), load_sites(p["sites"]), sites_name="sites.csv")
    return review_load(loaded, [QC], cm)


def test_batches_and_qualifiers_equal_the_engines_review(session):
    from dashboard.views.labqc import batch_table, lab_qc

    review, results, calibration = lab_qc(session)
    engine = _engine_review()
    assert calibration is None
    ours = batch_table(review).sort_values(["lab", "batch"]).reset_index(drop=True)
    theirs = engine.batches[ours.columns].sort_values(["lab", "batch"]).reset_index(drop=True)
    assert ours.to_dict("records") == theirs.to_dict("records")
    assert review.qualified["lab_qc_qualifier"].value_counts().to_dict() == \
        engine.qualified["lab_qc_qualifier"].value_counts().to_dict()


def test_a_failed_control_sample_rejects_the_batch_cadmium(session):
    from dashboard.views.labqc import affected_results, batch_options, lab_qc, verdict_table

    review, results, _ = lab_qc(session)
    opts = {o["label"].split(" ")[0].split(":")[0]: o["value"] for o in batch_options(review)}
    v = verdict_table(review, opts["FLB-2021-11"], outside_only=True)
    lcs = v[(v["analyte"] == "cadmium") & (v["element_name"] == "laboratory control sample (blank spike)")].iloc[0]
    assert (lcs["value"], lcs["window_low"], lcs["window_high"], lcs["window_from"]) == (45.0, 85.0, 115.0, "lab")
    hit = affected_results(review, results, int(lcs["verdict_pos"]))
    assert len(hit) == lcs["affected"] > 0
    assert set(hit["analyte"]) == {"cadmium"} and set(hit["lab_qc_qualifier"]) == {"R"}


def test_the_retest_list_carries_the_lab_qc_reasons(session):
    from dashboard.views.retest import retest_frame

    reasons = set(retest_frame(session)["reason"].astype(str))
    assert {"control_sample_out", "spike_recovery_low", "calibration_check_failed", "blank_affects_result"} <= reasons


def test_no_qc_rows_no_review():
    from dashboard_support import scenario_inputs

    from dashboard.state.session import build_session
    from dashboard.views.labqc import batch_options, lab_qc

    review, _, _ = lab_qc(build_session(scenario_inputs()))
    assert review is None and batch_options(review) == []


# ---------------------------------------------------------------- in the browser
@pytest.fixture(scope="module")
def labqc_url():
    from browser_support import serve

    from dashboard.app import create_app

    with serve(create_app(inputs=_inputs())) as url:
        yield url


@pytest.mark.browser
def test_pick_a_batch_click_a_qc_value_see_its_results(labqc_url, page):
    from browser_support import shot
    from playwright.sync_api import expect

    page.goto(labqc_url + "/labqc")
    expect(page.locator("#lq-batches-summary")).to_contain_text("20 with laboratory QC rows", timeout=30_000)
    page.locator("#lq-batch").click()
    page.get_by_role("option", name="FLB-2022-08", exact=False).click()
    expect(page.locator("#lq-narrative")).to_contain_text("zinc matrix spike (FL-1192MS): recovery 62 %", timeout=20_000)
    first = page.locator("#lq-verdicts .ag-row[row-index='0'] .ag-cell[col-id='element_name']").first
    expect(first).to_have_text("matrix spike")
    first.click()
    expect(page.locator("#lq-affected-count")).to_have_text("8 results qualified by this QC value", timeout=20_000)
    quals = page.locator("#lq-affected .ag-cell[col-id='qualifier_given']").all_inner_texts()
    assert set(quals) <= {"J-", "UJ"} and len(quals) == 8
    shot(page, "labqc")
    assert page.js_errors == []
