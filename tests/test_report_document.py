"""The report's content (tracescreen.report.build, findings, words, summary, cover) and its Word document.

Outside references: the published limit values named beside each check, a real Water Quality Portal
download (tests/data/, README there) for the precision of numbers, and the engine's own rows for the
Word read-back (the document must show exactly the rows the engine computed).
"""

from __future__ import annotations

from pathlib import Path

import docx
import numpy as np
import pandas as pd
import pytest
from flag_frames import screening

from tracescreen._internal.text import format_significant, significant_figures
from tracescreen.cli import main
from tracescreen.report import findings
from tracescreen.report.cover import CoverError, load_cover
from tracescreen.report.document import Table, column_parts
from tracescreen.report.words import in_words, result_precision

DATA = Path(__file__).parent / "data"

# Published values (µg/L): WHO GDWQ 4th ed. incl. 1st and 2nd addenda (2022), Table A3.3, lead 0.01 mg/L;
# Directive (EU) 2020/2184, Annex I Part B, lead 5 µg/L (the value from 12 January 2036; 10 µg/L until then).
WHO_LEAD, EU_LEAD_2036 = 10.0, 5.0


def _refs(tables):
    return findings.limit_references(pd.DataFrame({"table_id": tables, "name": [f"{t}, table" for t in tables],
                                                   "source": tables, "url": ""}), tables)


def test_exceedance_rows_one_per_result_with_limits_side_by_side():
    """Two lead results against the WHO and EU values: one row per result above a limit, each limit in its
    own column, exceeded ones marked (a value equal to a limit meets it: README.md#output-screeningcsv)."""
    rows = [dict(sample_id="A", sampled_at="2024-01-01", value=7.0),
            dict(sample_id="B", sampled_at="2024-04-01", value=12.0),
            dict(sample_id="C", sampled_at="2024-07-01", value=5.0)]
    scr = screening(rows, [("eu", EU_LEAD_2036), ("who", WHO_LEAD)])
    out, long = findings.exceedance_rows(scr, pd.DataFrame({"entry_id": []}), _refs(["eu", "who"]))
    assert out["sample_id"].tolist() == ["A", "B"]  # C equals the EU value: meets
    assert out[["[1]", "[2]"]].to_numpy().tolist() == [["▲\u00a05.00", "10.0"], ["▲\u00a05.00", "▲\u00a010.0"]]
    assert set(long["status"]) == {"exceeds", "meets"} and len(long) == 4
    assert (out["hardness_used_mg_L"] == "").all()  # neither limit depends on hardness
    first, _ = findings.exceedance_rows(scr, pd.DataFrame({"entry_id": []}), _refs(["eu", "who"]), max_results=1)
    assert first["sample_id"].tolist() == ["A"] and first.attrs["total"] == 2


def test_numbers_keep_the_laboratory_precision_of_a_real_download():
    """Each detected result of a real WQP narrowResult download is shown in µg/L with the significant
    figures the laboratory reported (0.08931 mg/L -> 89.31 µg/L; 2.5 ng/L -> 0.0025 µg/L)."""
    from tracescreen.io.loading import LoadOptions, load_results

    acc = load_results([DATA / "wqp_narrowresult_orsanco_nps_2024_metals.csv"], LoadOptions(date_order="mdy")).accepted
    det = acc[acc["detected"]]
    shown = format_significant(det["value_ug_L"], result_precision(det["result_text"]))
    np.testing.assert_allclose(shown.astype(float), det["value_ug_L"], rtol=1e-12)
    reported = np.maximum(significant_figures(det["result_text"]), 2)
    point = shown.str.contains(".", regex=False).to_numpy()
    assert (significant_figures(shown)[point] == reported[point]).all()  # no figure lost or invented
    assert len(det) > 15 and (det["unit"].astype(str) != "ug/L").any()


def test_wide_table_parts_repeat_the_key_columns():
    """A table wider than its page prints in parts, each starting with the key columns; every column once."""
    frame = pd.DataFrame({c: ["x"] for c in ["Site", "Site name"] + [f"m{i}" for i in range(13)]})
    parts = column_parts(Table(frame, "t", key_columns=2, max_columns=6))
    assert all(list(p.columns[:2]) == ["Site", "Site name"] for p in parts)
    assert sorted(c for p in parts for c in p.columns[2:]) == sorted(frame.columns[2:]) and len(parts) == 4


def test_cover_file_and_options(tmp_path):
    """Options win over the cover file; an unknown key names the file and the key."""
    f = tmp_path / "cover.yaml"
    f.write_text("client: Board\nversion: 2\nnotes: first\n", encoding="utf-8")
    c = load_cover(f, notes="second", title=None)
    assert (c.client, c.version, c.notes) == ("Board", "2", "second")
    f.write_text("clint: Board\n", encoding="utf-8")
    with pytest.raises(CoverError, match=r"cover\.yaml: unknown key\(s\) clint"):
        load_cover(f)


def test_bad_cover_is_a_one_line_user_error(tmp_path, scenario_args, capsys):
    f = tmp_path / "cover.yaml"
    f.write_text("- not a mapping\n", encoding="utf-8")
    assert main(["report", *scenario_args, "--cover", str(f), "--charts", "none", "--out", str(tmp_path / "r.html")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "cover.yaml" in err[0]


def test_words_not_codes_in_headers_and_cells():
    """Headers and coded cells read as words; statuses by their labels."""
    frame = pd.DataFrame({"site_id": ["S1"], "basis": ["running_annual_mean"], "status": ["nondetect_meets"],
                          "ratio": [1.23456]})
    w = in_words(frame)
    assert list(w.columns) == ["Site", "Basis", "Status", "Value / limit"]
    assert w.iloc[0].tolist() == ["S1", "running annual mean", "Not detected, within limit", "1.23"]


@pytest.fixture(scope="module")
def engine_rows():
    """The exceedance rows the engine computes for the demo scenario (the same run as `tracescreen report`)."""
    from conftest import demo_inputs

    from tracescreen import pipeline
    from tracescreen._internal.frames import plain_text
    from tracescreen.report.build import once_per_site

    res = pipeline.run(demo_inputs(), pipeline.Options(periods=False, statistics=None, retest=None, lab_qc=None))
    scr = plain_text(res.screened)
    refs = findings.limit_references(res.limits.tables, scr["limit_table"].dropna().astype(str).unique())
    rows, _ = findings.exceedance_rows(scr, res.limits.entries, refs, res.sites)
    return once_per_site(in_words(rows))  # a printed table names each site once per run of its rows


def _docx_table(document, first_headers):
    for t in document.tables:
        head = [c.text for c in t.rows[0].cells]
        if head[:len(first_headers)] == first_headers:
            return pd.DataFrame([[c.text for c in r.cells] for r in t.rows[1:]], columns=head)
    raise AssertionError(f"no table starting {first_headers}")


def test_word_document_reads_back_with_the_engines_rows(demo_report, engine_rows):
    """The .docx read back with python-docx: a title, the numbered sections as Heading 1, the caution,
    and the exceedance table's cells equal to the engine's rows, row for row."""
    d = docx.Document(str(demo_report["docx"]))
    heads = [p.text for p in d.paragraphs if p.style.name == "Heading 1"]
    assert heads[0] == "Executive summary" and "2 Exceedances" in heads
    assert any(h.startswith("Appendix B Limit tables") for h in heads)
    assert any("Caution." in c.text for t in d.tables for c in t.rows[0].cells)
    table = _docx_table(d, ["Site", "Site name", "Sampled", "Sample"])
    pd.testing.assert_frame_equal(table, engine_rows.astype(str).reset_index(drop=True), check_dtype=False)
    assert len(table) > 100


def test_markup_in_user_text_stays_text(tmp_path, scenario_args):
    """A cover field holding markup is shown as text in HTML (escaped) and in Word (a plain run)."""
    html, word = tmp_path / "r.html", tmp_path / "r.docx"
    assert main(["report", *scenario_args, "--site", "KR01", "--client", "<script>alert(1)</script>",
                 "--charts", "none", "--out", str(html), "--docx", str(word)]) == 0
    page = html.read_text(encoding="utf-8")
    assert "<script>alert(1)" not in page and "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    cells = [c.text for t in docx.Document(str(word)).tables for r in t.rows for c in r.cells]
    assert "<script>alert(1)</script>" in cells


@pytest.fixture(scope="module")
def demo_run():
    from conftest import demo_inputs

    from tracescreen import pipeline
    from tracescreen._internal.frames import plain_text

    res = pipeline.run(demo_inputs(), pipeline.Options(periods=False, retest=None, lab_qc=None))
    return res, plain_text(res.screened)


def test_charts_mark_every_exceedance_and_label_limits(demo_run):
    """Chart figures (before drawing): one marker per result above a limit, shaped as on the dashboard
    (vocabulary.SYMBOL), arsenic's limit line labelled with the published 10 µg/L and its tables'
    references (WHO GDWQ 2022 Table A3.3; Directive (EU) 2020/2184 Annex I Part B), log-axis ticks
    written in full."""
    from tracescreen import vocabulary
    from tracescreen.report.charts import chart_series, metal_figures

    res, scr = demo_run
    refs = findings.limit_references(res.limits.tables, scr["limit_table"].dropna().astype(str).unique())
    series = chart_series(scr, res.trends)
    figures = metal_figures(scr, series, res.limits.entries, refs, res.sites)
    drawn = sum(len(t["x"]) for f in figures for t in f.figure["data"]
                if t.get("legendgroup") == "exceeds" and t["marker"]["symbol"] == vocabulary.SYMBOL["exceeds"])
    site = scr[scr["sample_type"].eq("sample")]
    assert drawn == len(site[site["status"].eq("exceeds")].drop_duplicates(["file", "sheet", "row"])) > 100
    arsenic = next(f for f in figures if f.caption == "arsenic (total)")
    who, eu = (int(refs.set_index("table_id").loc[t, "ref"]) for t in ("who_gdwq_2022", "eu_dwd_2020_2184"))
    labels = [a["text"] for a in arsenic.figure["layout"]["annotations"]]
    assert any(lab.startswith("10 µg/L") and f"[{who}]" in lab and f"[{eu}]" in lab for lab in labels)
    for f in figures:
        for key, axis in f.figure["layout"].items():
            if key.startswith("yaxis") and axis["type"] == "log":
                assert "log scale" in axis["title"]["text"]
                assert axis["ticktext"] == [f"{v:g}" for v in axis["tickvals"]]


def test_dense_chart_is_embedded_as_webp_and_sparse_as_svg():
    """A chart of more markers than MAX_SVG_POINTS goes into the page as WebP (an SVG grows with every
    marker); others as SVG; both inside <img> (inert: an image cannot run code)."""
    from tracescreen.report.document import MAX_SVG_POINTS, Figure
    from tracescreen.report.html import figure_html

    sparse = Figure({}, "a", "sparse", points=MAX_SVG_POINTS, images={"svg": b"<svg/>"})
    dense = Figure({}, "b", "dense", points=MAX_SVG_POINTS + 1, images={"webp": b"RIFF"})
    assert 'src="data:image/svg+xml;base64,' in figure_html(sparse)
    assert 'src="data:image/webp;base64,' in figure_html(dense)


def test_batches_without_qc_summary_are_one_request_per_batch_not_thousands_of_retests():
    """A batch without its QC summary asks the laboratory for documents (retest.request.REASON_ACTION); the
    summary and the retest section say so per batch and count only the other reasons as flagged results.
    Counts recomputed here with pandas from the rows given (common practice: one request per batch)."""
    from types import SimpleNamespace

    from tracescreen.report.build import Context, ReportOptions, retest_section
    from tracescreen.report.summary import retest_sentence
    from tracescreen.retest.labqc.reasons import SUGGESTED_ACTIONS

    rows = pd.DataFrame({
        "site_id": ["S1", "S1", "S2", "S1", "S2", "S2"], "sample_id": ["A", "A", "B", "C", "D", "D"],
        "sampled_at": pd.to_datetime(["2024-01-02", "2024-01-02", "2024-01-03", "2024-02-01", "2024-03-01",
                                      "2024-03-01"]),
        "analyte": ["lead", "zinc", "lead", "lead", "copper", "copper"], "fraction": "total", "lab": "L",
        "batch": ["B1", "B1", "B1", "B2", "B3", "B3"],
        "reason": ["qc_summary_missing"] * 4 + ["near_limit", "history_outlier"], "detail": "d",
    })
    rows["suggested_action"] = rows["reason"].map(SUGGESTED_ACTIONS).fillna("confirm")
    text = retest_sentence(rows)
    assert text.startswith("1 result is flagged for a confirmatory retest")
    assert "near limit 1" in text and "history outlier 1" in text and "qc summary" not in text.split(".")[0]
    assert "2 batches (4 results) came without the laboratory's QC summary" in text

    ctx = Context(SimpleNamespace(retest=rows, sites=None), pd.DataFrame(), pd.DataFrame(), None, ReportOptions())
    tables = [b for b in retest_section(ctx).blocks if isinstance(b, Table)]
    docs = next(t for t in tables if t.table_id == "retest-documents-table").frame
    assert docs["Batch"].tolist() == ["B1", "B2"] and docs["Results"].tolist() == ["3", "1"]
    assert docs["Samples"].tolist() == ["2", "1"] and docs["Sites"].tolist() == ["2", "1"]
    flagged = next(t for t in tables if t.table_id == "retest-table").frame
    assert len(flagged) == 2 and set(flagged["Reason"]) == {"near limit", "history outlier"}


def _panels(doc) -> int:
    """Panels drawn: one x axis per site panel of each metal's figure."""
    return sum(len([k for k in f.figure["layout"] if k.startswith("xaxis")]) for f in doc.figures())


def test_charts_by_default_only_for_series_with_findings_and_all_on_request(demo_run):
    """Issue rule (README "Site summary report"): by default a panel for each site–metal series with a finding (a
    result above a limit, or an increasing trend whose line reaches a limit), every series with ``charts="all"``,
    at most ``max_panels`` panels with the rest named. Series recomputed here with pandas from the run's tables."""
    from tracescreen.report.build import ReportOptions, build_document
    from tracescreen.report.tables import report_data

    res, scr = demo_run
    key = ["site_id", "analyte", "fraction"]
    site = scr[scr["sample_type"].eq("sample")]
    exceeding = site.loc[site["status"].eq("exceeds"), key].astype(str)
    rising = res.trends.loc[res.trends["direction"].astype(str).eq("increasing")
                            & res.trends["crosses_limit_on"].notna(), key].astype(str)
    with_findings = len(pd.concat([exceeding, rising]).drop_duplicates())
    every = len(site[key].astype(str).drop_duplicates())
    data = report_data(res)
    assert _panels(build_document(data, None, ReportOptions())) == with_findings < every
    capped = build_document(data, None, ReportOptions(charts="all", max_panels=5))
    assert _panels(capped) == 5
    notes = [b.text for s in capped.sections if s.title == "Charts" for b in s.blocks if hasattr(b, "text")]
    assert any(t.startswith(f"{every - 5} further series are not drawn (at most 5 panels)") for t in notes)
    assert _panels(build_document(data, None, ReportOptions(charts="none"))) == 0


def test_design_appendix_states_the_methods_of_the_run(demo_run):
    """Appendix A states the non-detect method, the trend test and its alpha and the guard band of the run
    (issue rule: the statistical design stays in the report; values are the run's own StatisticsOptions)."""
    from dataclasses import replace

    from tracescreen.report.build import build_document
    from tracescreen.report.tables import report_data

    res, _ = demo_run
    doc = build_document(report_data(res))
    design = next(s for s in doc.sections if s.title == "Statistical design")
    text = " ".join(getattr(b, "text", "") for b in design.blocks) + " ".join(
        " ".join(map(str, b.frame.to_numpy().ravel())) for b in design.blocks if isinstance(b, Table))
    stats = res.options.statistics
    assert "never taken as zero" in text and "no guard band was applied" in text
    for note in stats.notes():
        assert note in text
    assert f"{stats.alpha:g}" in text
    banded = replace(res, screened=res.screened.assign(guard_band_ug_L=0.0))
    banded_text = " ".join(getattr(b, "text", "") for s in build_document(report_data(banded)).sections
                           if s.title == "Statistical design" for b in s.blocks)
    assert "a guard band of f × U around each limit" in banded_text
