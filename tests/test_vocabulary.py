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
    """The dashboard's status CSS is generated from the vocabulary (no status colour in its style sheet)."""
    from dashboard.render.status_css import status_css

    css = status_css()
    static = (ROOT / "dashboard" / "assets" / "style.css").read_text(encoding="utf-8")
    for s in vocabulary.STATUSES:
        assert f".status-text.status-{s}, .status-{s} .glyph {{ color: {vocabulary.TEXT_COLOUR[s]}; }}" in css
        assert f"td.status-{s}, .badge.status-{s} {{ background: {vocabulary.TINT[s]}; }}" in css
        assert vocabulary.GLYPH[s] in css
        assert f".status-{s}" not in static


def test_report_uses_the_vocabulary_glyphs_colours_and_labels():
    from tracescreen.report import html
    from tracescreen.report.words import codes_table

    codes = codes_table([]).set_index("code")["words"]
    for s in vocabulary.RANKED:
        assert f".st-{s} .g{{color:{vocabulary.COLOUR[s]}}}" in html.CSS
        assert codes[s] == f"{vocabulary.GLYPH[s]} {vocabulary.SHORT[s]}: {vocabulary.LABEL[s]}"


def _relative_luminance(colour: str) -> float:
    """WCAG 2.1 relative luminance of an sRGB colour (W3C, WCAG 2.1, definition "relative luminance")."""
    h = colour.lstrip("#")
    channels = [int(h[i:i + 2], 16) / 255 for i in (0, 2, 4)]
    lin = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in channels]
    return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]


def _contrast(a: str, b: str) -> float:
    """WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05)."""
    hi, lo = sorted((_relative_luminance(a), _relative_luminance(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def test_wcag_contrast_formula_on_published_extremes():
    # WCAG 2.1: contrast ratios range from 1:1 to 21:1 (black on white)
    assert round(_contrast("#000000", "#ffffff"), 2) == 21.0
    assert _contrast("#777777", "#777777") == 1.0
    # #767676 on white is the lightest grey meeting 4.5:1 (common practice, WebAIM contrast checker from memory: 4.54)
    assert round(_contrast("#767676", "#ffffff"), 2) == 4.54


def test_status_text_meets_wcag_aa_on_white_and_on_its_tint():
    """Status words and glyphs drawn as text reach 4.5:1 (WCAG 2.1 SC 1.4.3, level AA) on white and on the
    status's cell tint; the plain chart colours are for markers beside shapes and words."""
    assert set(vocabulary.TEXT_COLOUR) == set(vocabulary.STATUSES)
    for s in vocabulary.STATUSES:
        assert _contrast(vocabulary.TEXT_COLOUR[s], "#ffffff") >= 4.5, s
        assert _contrast(vocabulary.TEXT_COLOUR[s], vocabulary.TINT[s]) >= 4.5, s
