"""The report as a document: sections of headings, paragraphs, tables and figures, built once and
written by each renderer (printable HTML and so PDF in :mod:`tracescreen.report.html`, Word in
:mod:`tracescreen.report.docx`).

Blocks hold plain text only; each renderer escapes it for its format. Tables hold text cells
(:func:`tracescreen.report.words.in_words`) and say which leading columns identify a row, so that a
table too wide for a page is split into parts that repeat them (:func:`column_parts`).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd

from tracescreen.report.cover import Cover


@dataclass
class Paragraph:
    """A paragraph; ``style`` is ``"p"``, ``"lead"`` (a summary sentence), ``"caution"`` or ``"note"``."""

    text: str
    style: str = "p"


@dataclass
class Bullets:
    """A list of sentences."""

    items: list[str]


@dataclass
class Heading:
    """A sub-heading inside a section (level 3)."""

    text: str


@dataclass
class Table:
    """A table of text cells.

    Attributes
    ----------
    frame : pandas.DataFrame
        Text cells, headers in words.
    table_id : str
        Element id in HTML (``exceedances-table``).
    caption : str
    key_columns : int
        Leading columns that identify a row, repeated in every part of a split table.
    max_columns : int
        Columns per part (key columns included) before the table is split.
    numeric : tuple of str
        Headers of right-aligned (numeric) columns.
    status : pandas.DataFrame or None
        Status code per cell (same shape as ``frame``, "" where none): a cell's class in HTML.
    more : str
        A sentence after the table, e.g. where the rows left out are.
    """

    frame: pd.DataFrame
    table_id: str
    caption: str = ""
    key_columns: int = 1
    max_columns: int = 12
    numeric: tuple = ()
    status: pd.DataFrame | None = None
    more: str = ""


@dataclass
class Figure:
    """A chart: a plotly figure, drawn to static images (SVG for HTML and PDF, PNG for Word) by
    :func:`tracescreen.report.images.draw`.

    Attributes
    ----------
    figure : plotly.graph_objects.Figure
    figure_id : str
    caption : str
    width, height : int
        Size in CSS pixels.
    points : int
        Markers drawn; a figure of more than :data:`MAX_SVG_POINTS` is shown on the page as WebP (an
        SVG grows with every point; a WebP of a dense chart is a third of its PNG).
    images : dict
        Format (``"svg"``, ``"png"``, ``"webp"``) -> bytes, filled when drawn.
    """

    figure: object
    figure_id: str
    caption: str = ""
    width: int = 700
    height: int = 900
    points: int = 0
    images: dict = field(default_factory=dict)

    @property
    def page_format(self) -> str:
        """The image format of this figure in HTML and PDF: SVG, or WebP for a dense figure."""
        return "webp" if self.points > MAX_SVG_POINTS else "svg"


#: Markers above which a chart is embedded in HTML and PDF as WebP rather than SVG: about 240 bytes
#: of SVG per marker, so 600 markers are about 150 KB, what a 6-panel WebP at twice the pixels
#: takes whatever the markers (measured with kaleido 1.5: 2,520 markers 606 KB SVG, 777 KB PNG,
#: 180 KB WebP).
MAX_SVG_POINTS = 600


@dataclass
class Section:
    """A numbered section (or lettered appendix) starting on a new page."""

    section_id: str
    title: str
    blocks: list = field(default_factory=list)
    appendix: bool = False
    landscape: bool = False


@dataclass
class Document:
    """The whole report: first page (cover, caution, executive summary) and sections."""

    cover: Cover
    caution: str
    summary: list[str]
    sections: list[Section]

    def figures(self) -> list[Figure]:
        """Every figure of the document, in order."""
        return [b for s in self.sections for b in s.blocks if isinstance(b, Figure)]

    def numbered(self) -> list[tuple[str, Section]]:
        """Sections with their numbers: 1, 2, ... for the body, A, B, ... for appendices."""
        out, n, a = [], 0, 0
        for s in self.sections:
            if s.appendix:
                out.append((f"Appendix {chr(ord('A') + a)}", s))
                a += 1
            else:
                n += 1
                out.append((str(n), s))
        return out


def column_parts(table: Table) -> list[pd.DataFrame]:
    """The table's column parts: all of it when it fits :attr:`Table.max_columns`, else parts of the
    other columns, each with the key columns first."""
    f = table.frame
    if f.shape[1] <= table.max_columns:
        return [f]
    keys = list(f.columns[:table.key_columns])
    rest = list(f.columns[table.key_columns:])
    step = max(table.max_columns - len(keys), 1)
    return [f[keys + rest[i:i + step]] for i in range(0, len(rest), step)]
