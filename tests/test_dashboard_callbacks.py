"""Dashboard callback logic as plain functions, on the demo scenario, checked against the engine."""

from __future__ import annotations

import base64
import io
import math

import numpy as np
import pandas as pd
import pytest
from dashboard_support import engine_attention_rows, engine_view, scenario_inputs

from dashboard.render.figures import WEBGL_THRESHOLD, result_points
from dashboard.render.map_figure import map_figure
from dashboard.render.series import series_view, trend_view
from dashboard.render.site_chart import site_chart
from dashboard.state.frames import plain_frame
from dashboard.state.session import build_session
from dashboard.state.store import DataStore
from dashboard.views.limits import formula_text, sites_for_use
from dashboard.views.matrix import Filters, matrix_frame, site_worst, status_counts
from dashboard.views.quality import (
    reason_counts,
    rejected_frame,
    set_aside_counts,
    set_aside_frame,
)
from dashboard.views.tables import exceedance_rows, to_csv_bytes
from dashboard.views.uploads import (
    UploadError,
    add_token,
    decode_upload,
    preview_upload,
)
from tracescreen import vocabulary
from tracescreen.screening.status import worst_status


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    return DataStore(scenario_inputs(), upload_dir=tmp_path_factory.mktemp("uploads"), max_upload_bytes=50_000)


@pytest.fixture(scope="module")
def session(store):
    return store.base_session()


def _engine_samples() -> pd.DataFrame:
    screened = engine_view()[3]
    return screened[screened["sample_type"] == "sample"]


def _engine_cell_counts(screened: pd.DataFrame) -> pd.DataFrame:
    """Results per site, analyte and worst status, by the engine's own ``worst_status``."""
    per_result = worst_status(screened, ["file", "sheet", "row", "site_id", "analyte"])
    return per_result.groupby(["site_id", "analyte", "worst_status"]).size().rename("n").reset_index()


def _dashboard_cell_counts(session, counts) -> pd.DataFrame:
    frame = matrix_frame(session, counts)
    long = frame.melt(id_vars=["site_id", "analyte"], value_vars=list(vocabulary.RANKED),
                      var_name="worst_status", value_name="n")
    return long[long["n"] > 0]


def _same(a: pd.DataFrame, b: pd.DataFrame, cols) -> None:
    a = plain_frame(a[cols]).astype(str).sort_values(cols).reset_index(drop=True)
    b = plain_frame(b[cols]).astype(str).sort_values(cols).reset_index(drop=True)
    pd.testing.assert_frame_equal(a, b)


def test_overview_counts_match_engine_worst_status(session):
    """Matrix counts per site, metal and worst status equal the engine's worst_status per result."""
    counts = status_counts(session, Filters())
    _same(_dashboard_cell_counts(session, counts), _engine_cell_counts(_engine_samples()),
          ["site_id", "analyte", "worst_status", "n"])


def test_overview_filters_match_engine_rows(session):
    """Table, fraction and date filters count the same results as filtering the engine rows."""
    f = Filters(tables=("who_gdwq_2022",), fraction="total", start="2019-01-01", end="2021-12-31")
    rows = _engine_samples()
    rows = rows[(rows["limit_table"] == "who_gdwq_2022") & (rows["fraction"] == "total")
                & (rows["sampled_at"] >= "2019-01-01") & (rows["sampled_at"] <= "2021-12-31")]
    assert len(rows) > 0
    _same(_dashboard_cell_counts(session, status_counts(session, f)), _engine_cell_counts(rows),
          ["site_id", "analyte", "worst_status", "n"])


def test_campaign_filter_is_sampling_quarter(session):
    """A campaign (calendar quarter of sampling, common practice) counts only that quarter's results."""
    counts = status_counts(session, Filters(campaigns=("2020-Q3",)))
    rows = _engine_samples()
    in_q = rows[(rows["sampled_at"].dt.year == 2020) & (rows["sampled_at"].dt.quarter == 3)]
    assert counts.sum() == in_q.drop_duplicates(["file", "sheet", "row"]).shape[0] > 0


def test_overview_totals_count_each_site_sample_once(session):
    """Totals over statuses equal the number of accepted site-sample results (row conservation)."""
    loaded = engine_view()[0]
    assert status_counts(session, Filters()).sum() == int((loaded.accepted["sample_type"] == "sample").sum())


def test_series_point_count_and_nondetects_at_detection_limit(session):
    """One point per site-sample result; non-detects sit at their detection limit (README.md#dashboard)."""
    acc = engine_view()[0].accepted
    sel = acc[(acc["site_id"] == "BH01") & (acc["analyte"] == "arsenic") & (acc["fraction"] == "total")
              & (acc["sample_type"] == "sample")]
    pts = result_points(session.series("BH01", "arsenic", "total"))
    assert len(pts) == len(sel) > 0
    nd = pts[~pts["detected"]]
    np.testing.assert_allclose(nd["y"], nd["detection_limit_ug_L"])
    fig, _, _ = series_view(session, "BH01", "arsenic", "total")
    results = [t for t in fig["data"] if t["meta"]["role"] == "result"]
    assert sum(len(t["x"]) for t in results) == len(sel)
    for t in results:  # open symbols for non-detects, filled for detected values
        detected = {d for d in sel["detected"]}
        assert all(sym.endswith("-open") == t["meta"]["status"].startswith("nondetect")
                   for sym in t["marker"]["symbol"]) or detected == {True, False}


def test_who_arsenic_limit_line_at_10_ug_per_L(session):
    """BH01 (drinking water) arsenic chart draws the WHO guideline value 0.01 mg/L = 10 µg/L
    (WHO Guidelines for drinking-water quality, 4th ed. with 1st and 2nd addenda, 2022, Annex 3)."""
    fig, _, _ = series_view(session, "BH01", "arsenic", "total")
    who = [t for t in fig["data"] if t["meta"]["role"] == "limit" and "who_gdwq_2022" in t["meta"]["tables"]]
    assert len(who) == 1 and "10 µg/L" in who[0]["name"] and "who_gdwq_2022" in who[0]["name"]
    np.testing.assert_allclose(who[0]["y"], 10.0, rtol=1e-12)
    assert who[0]["line"]["shape"] == "hv"


def test_hardness_dependent_lead_limit_follows_sample_hardness(session):
    """KR02 dissolved lead chronic line = exp(1.273 ln H - 4.705)(1.46203 - 0.145712 ln H) at each sample's
    hardness, rounded to two significant figures (US EPA NRWQC / 40 CFR 131.38, which lists 2.5 µg/L at
    H = 100 mg/L CaCO3 and says criteria are rounded to two significant figures, 131.38(b)(2))."""

    def epa_lead_ccc(h):
        v = np.exp(1.273 * np.log(h) - 4.705) * np.minimum(1.0, 1.46203 - 0.145712 * np.log(h))
        digits = 1 - np.floor(np.log10(v))  # two significant figures, halves up
        return np.floor(v * 10.0 ** digits + 0.5) / 10.0 ** digits

    assert epa_lead_ccc(np.array([100.0]))[0] == pytest.approx(2.5, abs=0.05)
    rows = session.series("KR02", "lead", "dissolved")
    fig, _, _ = series_view(session, "KR02", "lead", "dissolved")
    chronic = [t for t in fig["data"] if t["meta"]["role"] == "limit" and "chronic" in t["name"]
               and "us_epa_nrwqc_freshwater_aquatic_life" in t["meta"]["tables"]]
    assert len(chronic) == 1 and chronic[0]["meta"]["varies"]
    ref = rows[(rows["limit_table"] == "us_epa_nrwqc_freshwater_aquatic_life") & (rows["duration"] == "chronic")
               & (rows["sample_type"] == "sample")].drop_duplicates("sampled_at").sort_values("sampled_at")
    np.testing.assert_allclose(chronic[0]["y"], epa_lead_ccc(ref["hardness_used_mg_L"].to_numpy()), rtol=1e-9)


def test_exceedance_rows_equal_engine_rows(session):
    """The exceedance table holds exactly the engine's exceeds and nondetect_inconclusive site-sample rows."""
    cols = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "limit_table", "duration",
            "limit_ug_L", "status"]
    ours = exceedance_rows(session)
    theirs = engine_attention_rows()
    assert len(ours) == len(theirs) > 0
    _same(ours.astype({"limit_ug_L": float}), theirs, cols)


def test_exceedance_csv_is_written_by_the_engine_writer(session, tmp_path):
    """The CSV download is the engine's CSV writer output (same header, rows and number text)."""
    from tracescreen.report.writers import write_csv

    rows = exceedance_rows(session)
    data = to_csv_bytes(rows)
    back = pd.read_csv(io.BytesIO(data), dtype=str, keep_default_na=False)
    ref_path = write_csv(engine_attention_rows()[list(rows.columns)], tmp_path / "ref.csv")
    ref = pd.read_csv(ref_path, dtype=str, keep_default_na=False)
    _same(back, ref, list(rows.columns))


def test_map_marks_every_located_site_by_worst_status(session):
    """Every site of the sites file is placed once, with the marker shape of its worst status."""
    table = site_worst(session, status_counts(session, Filters()))
    fig = map_figure(table)
    placed = {sid: t["marker"]["symbol"] for t in fig["data"] for sid in t["text"]}
    assert "KR99" not in placed  # its every row was rejected (not in the sites file): not a site of the data
    sites = engine_view()[2]
    assert set(placed) == set(table["site_id"]) == set(sites["site_id"])
    west = [t for t in fig["data"] if t["meta"]["status"] == "exceeds"][0]
    assert west["customdata"][0][5].endswith("° W")  # the sites file's longitudes are negative: west
    for t in fig["data"]:
        assert t["marker"]["symbol"] == vocabulary.SYMBOL[t["meta"]["status"]]
    assert fig["layout"]["xaxis"]["scaleratio"] == pytest.approx(math.cos(math.radians(sites["latitude"].mean())))


def test_status_vocabulary_never_relies_on_colour_alone():
    """Each status has its own words, glyph and marker shape as well as a colour."""
    statuses = list(vocabulary.RANKED) + ["qc_sample"]
    for table in (vocabulary.LABEL, vocabulary.GLYPH, vocabulary.SYMBOL, vocabulary.COLOUR):
        assert all(s in table for s in statuses)
        assert len({table[s] for s in statuses}) == len(statuses)


def test_webgl_for_big_series():
    """A series above the WebGL threshold is drawn with scattergl, a small one with SVG scatter."""
    n = WEBGL_THRESHOLD + 1
    rows = pd.DataFrame({
        "_rid": np.arange(n), "sampled_at": pd.date_range("2000-01-01", periods=n, freq="D"),
        "value_ug_L": np.linspace(1, 2, n), "detected": True, "detection_limit_ug_L": 0.5,
        "status": "meets", "sample_type": "sample", "limit_table": "t", "duration": "", "basis": "single_sample",
        "limit_ug_L": 5.0, "source": "s", "use": "u",
    })
    assert site_chart({"total": rows}, "big")[0]["data"][0]["type"] == "scattergl"
    assert site_chart({"total": rows.iloc[:10]}, "small")[0]["data"][0]["type"] == "scatter"


def test_limit_formula_in_words_and_sites_per_use(session):
    """Hardness entries read as exp(m·ln H + b) × CF (40 CFR 131.36(b)(2) form); uses map to sites."""
    entries = session.limits.entries
    lead = entries[(entries["analyte"] == "lead") & (entries["duration"] == "chronic")].iloc[0]
    assert formula_text(lead) == "exp(1.273·ln H − 4.705) × (1.46203 − 0.145712·ln H) µg/L"
    sites = engine_view()[2]
    want = sorted(sites.loc[sites["uses"].map(lambda u: "drinking_water" in u), "site_id"])
    assert sites_for_use(session, "drinking_water") == want


def test_data_quality_lists_every_rejected_row(session):
    """Every rejected and set-aside row is listed with its reason; per-file counts add up
    (rows read = accepted + set aside + rejected)."""
    loaded = engine_view()[0]
    assert len(rejected_frame(session)) == len(loaded.rejected) > 0
    assert reason_counts(session)["rows"].sum() == len(loaded.rejected)
    assert len(set_aside_frame(session)) == len(loaded.set_aside)
    assert set_aside_counts(session)["rows"].sum() == len(loaded.set_aside)
    assert not set_aside_frame(session)["reason"].str.startswith("not screened:").any()
    f = session.files
    assert (f["rows_read"] == f["accepted"] + f["set_aside"] + f["rejected"]).all()


def _as_upload(text: str, name: str = "lab.csv") -> str:
    return "data:text/csv;base64," + base64.b64encode(text.encode()).decode()


def test_upload_size_cap_and_type():
    """Files over the cap or of another type are refused with a message naming the file."""
    with pytest.raises(UploadError, match="limited to"):
        decode_upload(_as_upload("x" * 60_000), "big.csv", 50_000)
    with pytest.raises(UploadError, match="expected a CSV or XLSX"):
        decode_upload(_as_upload("a"), "notes.txt", 50_000)
    assert decode_upload(_as_upload("a,b\n"), "ok.csv", 50_000) == b"a,b\n"


def test_upload_preview_shows_engine_rejection_and_joins_session(store, session, tmp_path):
    """A bad row in an upload is listed with the engine's reason; adding it grows the session."""
    text = ("site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
            "KR01,UP-1,2025-11-03,zinc,total,12,ug/L\n"
            "KR01,UP-2,2025-11-31,zinc,total,15,ug/L\n")
    prev = preview_upload(store, _as_upload(text), "upload.csv")
    from tracescreen.io.loading import load_results

    path = tmp_path / "upload.csv"
    path.write_text(text)
    expected = load_results([path], sites=engine_view()[2], sites_name="sites.csv").rejected
    assert prev.accepted == 1 and list(prev.rejected["reason"]) == list(expected["reason"])
    key = add_token("base", prev.token)
    assert add_token(key, prev.token) == key
    grown = store.get(key)
    assert grown.rid.max() == session.rid.max() + 1
    assert len(grown.rejected) == len(session.rejected) + 1


def test_build_session_keeps_each_result_once(session):
    """Every accepted result keeps a contiguous block of screening rows with its own file row."""
    acc = engine_view()[0].accepted
    assert session.rid.max() + 1 == len(acc)
    firsts = session.screened.drop_duplicates("_rid")
    pairs = set(zip(firsts["file"].astype(str), firsts["row"]))
    assert pairs == set(zip(acc["file"], acc["row"]))
    assert np.all(np.diff(session.series_key) >= 0)


def test_screened_input_order_does_not_matter():
    """Shuffling the accepted rows gives the same overview counts (sorting is the dashboard's job)."""
    inputs = scenario_inputs()
    a = build_session(inputs)
    inputs.accepted = inputs.accepted.sample(frac=1.0, random_state=7).reset_index(drop=True)
    b = build_session(inputs)
    np.testing.assert_array_equal(status_counts(a, Filters()), status_counts(b, Filters()))


def test_site_chart_shows_engine_trend(session):
    """KR02 dissolved zinc (the scenario's rising site): the chart's trend text and line are the
    engine's trend_table result for that series (Mann-Kendall / Sen, tested against pymannkendall
    in test_statistics_trends.py)."""
    from tracescreen.statistics.series import decimal_years
    from tracescreen.statistics.trends import trend_table

    acc = engine_view()[0].accepted
    sel = acc[(acc["site_id"] == "KR02") & (acc["analyte"] == "zinc") & (acc["fraction"] == "dissolved")]
    ref = trend_table(sel).iloc[0]
    (line,), (text,) = trend_view(session, "KR02", "zinc", "dissolved")
    assert line["meta"]["role"] == "trend" and ref["direction"] == "increasing"
    years = decimal_years([ref["last_sampled"]])[0] - decimal_years([ref["first_sampled"]])[0]
    np.testing.assert_allclose(line["y"], [ref["intercept"], ref["intercept"] + ref["slope_per_year"] * years])
    assert f"S = {ref['s']:.0f}" in text and "increasing" in text
