"""The statuses' colours and glyphs as CSS, generated from :mod:`tracescreen.vocabulary` (the one place
they are defined): text colours that meet WCAG AA, cell tints, and the glyph before a status word in
the grids."""

from __future__ import annotations

from tracescreen import vocabulary


def status_css() -> str:
    """CSS rules of every status: ``.status-text.status-X`` (words), ``td.status-X`` and ``.badge.status-X``
    (tinted cells), ``.status-X .glyph`` and the glyph shown before a status in a grid cell."""
    rules = []
    for s in vocabulary.STATUSES:
        text, tint, glyph = vocabulary.TEXT_COLOUR[s], vocabulary.TINT[s], vocabulary.GLYPH[s]
        rules += [
            f".status-text.status-{s}, .status-{s} .glyph {{ color: {text}; }}",
            f"td.status-{s}, .badge.status-{s} {{ background: {tint}; }}",
            f".ag-cell.status-text.status-{s} {{ font-weight: 600; }}",
            f".ag-cell.status-text.status-{s} .ag-cell-value::before {{ content: \"{glyph}\\00a0\"; }}",
        ]
    return "\n".join(rules)
