"""The status vocabulary is defined once and every view uses it (DEVELOPERS.md, "Architecture": vocabulary.py)."""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from tracescreen import vocabulary
from tracescreen.screening import status

ROOT = Path(__file__).resolve().parents[1]


def test_every_status_has_a_label_colour_shape_and_tint():
    for table in (vocabulary.LABEL, vocabulary.SHORT, vocabulary.COLOUR, vocabulary.SYMBOL, vocabulary.GLYPH,
                  vocabulary.TINT):
        assert set(table) == set(vocabulary.STATUSES)
    assert len(set(vocabulary.GLYPH.values())) == len(vocabulary.STATUSES)  # shapes tell statuses apart
    assert len(set(vocabulary.COLOUR.values())) == len(vocabulary.STATUSES)


def test_engine_and_dashboard_share_one_order():
    # the status rules give categoricals in the vocabulary's order (codes = positions in STATUSES)
    single = status.status_codes([True, True, False, False], [2.0, 0.5, np.nan, np.nan], [0.1, 0.1, 2.0, 0.1],
                                 [1.0, 1.0, 1.0, np.nan])
    assert [vocabulary.STATUSES[c] for c in single] == ["exceeds", "meets", "nondetect_inconclusive", "no_limit"]
    period, _ = status.statistic_status([2.0], [2.0], [2.0], [False], [1.0])
    assert tuple(period.categories) == vocabulary.RANKED and list(period) == ["exceeds"]
    # severity (higher worse, for maximum-reductions) is the same order counted from the other end
    assert tuple(sorted(vocabulary.SEVERITY, key=vocabulary.SEVERITY.get, reverse=True)) == vocabulary.RANKED
    assert "qc_sample" not in vocabulary.SEVERITY


def test_no_status_words_outside_the_vocabulary():
    """Statuses get their words, colours and shapes from tracescreen.vocabulary only: no other module of the
    engine or the dashboard keys a table by status names (a dict literal such as {"exceeds": ...})."""
    keyed = re.compile(r'["\'](exceeds|nondetect_inconclusive|nondetect_meets)["\']\s*:')
    found = [str(p.relative_to(ROOT)) for folder in ("src", "dashboard") for p in (ROOT / folder).rglob("*.py")
             if p.name != "vocabulary.py" and keyed.search(p.read_text(encoding="utf-8"))]
    assert found == []


def test_dashboard_css_uses_the_vocabulary_colours():
    css = (ROOT / "dashboard" / "assets" / "style.css").read_text(encoding="utf-8")
    for s in vocabulary.RANKED:
        glyph = re.search(rf"\.status-{s} \.glyph \{{ color: (#[0-9A-Fa-f]{{6}}); \}} td\.status-{s} \{{ background: "
                          r"(#[0-9A-Fa-f]{6}); \}", css)
        assert glyph, s
        assert glyph.group(1).lower() == vocabulary.COLOUR[s].lower() and glyph.group(2).lower() == vocabulary.TINT[s]


def test_report_uses_the_vocabulary_glyphs_colours_and_labels():
    from tracescreen.report import html
    from tracescreen.report.words import codes_table

    codes = codes_table([]).set_index("code")["words"]
    for s in vocabulary.RANKED:
        assert f".st-{s} .g{{color:{vocabulary.COLOUR[s]}}}" in html.CSS
        assert codes[s] == f"{vocabulary.GLYPH[s]} {vocabulary.SHORT[s]}: {vocabulary.LABEL[s]}"
