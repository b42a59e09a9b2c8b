"""The status vocabulary is defined once and every view uses it (issue 12)."""

from __future__ import annotations

import re
from pathlib import Path

from tracescreen import vocabulary
import numpy as np

from tracescreen.screening import status

ROOT = Path(__file__).resolve().parents[1]


def test_every_status_has_a_label_colour_shape_and_tint():
    for table in (vocabulary.LABEL, vocabulary.SHORT, vocabulary.COLOUR, vocabulary.SYMBOL, vocabulary.GLYPH,
                  vocabulary.TINT):
        assert set(table) == set(vocabulary.STATUSES)
    assert len(set(vocabulary.GLYPH.values())) == len(vocabulary.STATUSES)  # shapes tell statuses apart
    assert len(set(vocabulary.COLOUR.values())) == len(vocabulary.STATUSES)


def test_engine_and_dashboard_share_one_order():
    from dashboard import palette

    # the status rules give categoricals in the vocabulary's order (codes = positions in STATUSES)
    single = status.status_codes([True, True, False, False], [2.0, 0.5, np.nan, np.nan], [0.1, 0.1, 2.0, 0.1],
                                 [1.0, 1.0, 1.0, np.nan])
    assert [vocabulary.STATUSES[c] for c in single] == ["exceeds", "meets", "nondetect_inconclusive", "no_limit"]
    period, _ = status.statistic_status([2.0], [2.0], [2.0], [False], [1.0])
    assert tuple(period.categories) == vocabulary.RANKED and list(period) == ["exceeds"]
    assert palette.STATUS_ORDER == vocabulary.RANKED
    # the dashboard ranks worst highest, the engine codes worst lowest: the same order either way
    by_rank = sorted(palette.STATUS_RANK, key=palette.STATUS_RANK.get, reverse=True)
    assert tuple(by_rank) == vocabulary.RANKED
    assert [vocabulary.STATUS_CODE[s] for s in vocabulary.RANKED] == sorted(vocabulary.STATUS_CODE[s] for s in vocabulary.RANKED)


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
