"""The status vocabulary is defined once and every view uses it (issue 12)."""

from __future__ import annotations

import re
from pathlib import Path

from tracescreen import vocabulary
from tracescreen.screening import compare, periods

ROOT = Path(__file__).resolve().parents[1]


def test_every_status_has_a_label_colour_shape_and_tint():
    for table in (vocabulary.LABEL, vocabulary.SHORT, vocabulary.COLOUR, vocabulary.SYMBOL, vocabulary.GLYPH,
                  vocabulary.TINT):
        assert set(table) == set(vocabulary.STATUSES)
    assert len(set(vocabulary.GLYPH.values())) == len(vocabulary.STATUSES)  # shapes tell statuses apart
    assert len(set(vocabulary.COLOUR.values())) == len(vocabulary.STATUSES)


def test_engine_and_dashboard_share_one_order():
    from dashboard import palette

    assert compare.STATUSES == vocabulary.STATUSES and tuple(periods.STATUS_ORDER) == vocabulary.RANKED
    assert palette.STATUS_ORDER == vocabulary.RANKED
    # the dashboard ranks worst highest, the engine codes worst lowest: the same order either way
    by_rank = sorted(palette.STATUS_RANK, key=palette.STATUS_RANK.get, reverse=True)
    assert tuple(by_rank) == vocabulary.RANKED
    assert [compare.STATUS_RANK[s] for s in vocabulary.RANKED] == sorted(compare.STATUS_RANK[s] for s in vocabulary.RANKED)


def test_dashboard_css_uses_the_vocabulary_colours():
    css = (ROOT / "dashboard" / "assets" / "style.css").read_text(encoding="utf-8")
    for s in vocabulary.RANKED:
        glyph = re.search(rf"\.status-{s} \.glyph \{{ color: (#[0-9A-Fa-f]{{6}}); \}} td\.status-{s} \{{ background: "
                          r"(#[0-9A-Fa-f]{6}); \}", css)
        assert glyph, s
        assert glyph.group(1).lower() == vocabulary.COLOUR[s].lower() and glyph.group(2).lower() == vocabulary.TINT[s]


def test_report_uses_the_vocabulary_tints_and_labels():
    from tracescreen.report import html

    for s in vocabulary.RANKED:
        assert f".{s}{{background:{vocabulary.TINT[s]}}}" in html._CSS
        assert vocabulary.LABEL[s] in html.STATUS_TEXT[s]
