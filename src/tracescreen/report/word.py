"""The report as an editable Word document (python-docx): real headings (Heading 1 to 3, so Word's
navigation pane and table of contents work), real tables with a header row repeated on every page,
charts as PNG pictures, landscape sections for wide tables, and "Page n of N" in the footer.

The consultant writes around it: nothing is a text box or an image of text. Every text is the
document's own (user text included) written as plain runs; characters XML cannot hold are dropped.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

from tracescreen.report.document import Bullets, Document, Figure, Heading, Paragraph, Table, column_parts

_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
CAUTION_FILL = "FFF7ED"
HEADER_FILL = "F0F2F4"


def clean(text) -> str:
    """Text Word can hold (control characters other than tab and newline dropped)."""
    return _NOT_XML.sub("", str(text))


def _shade(cell, fill: str) -> None:
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    shd = OxmlElement("w:shd")
    shd.set(qn("w:val"), "clear")
    shd.set(qn("w:color"), "auto")
    shd.set(qn("w:fill"), fill)
    cell._tc.get_or_add_tcPr().append(shd)


def _repeat_header(row) -> None:
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    el = OxmlElement("w:tblHeader")
    el.set(qn("w:val"), "true")
    row._tr.get_or_add_trPr().append(el)


def _field(paragraph, code: str) -> None:
    """A Word field (PAGE, NUMPAGES) in a paragraph."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    run = paragraph.add_run()
    for kind, text in (("begin", None), (None, code), ("end", None)):
        if kind:
            el = OxmlElement("w:fldChar")
            el.set(qn("w:fldCharType"), kind)
        else:
            el = OxmlElement("w:instrText")
            el.set(qn("xml:space"), "preserve")
            el.text = text
        run._r.append(el)


def _footer(section) -> None:
    from docx.shared import Pt

    p = section.footer.paragraphs[0]
    p.text = ""
    run = p.add_run("tracescreen site summary: a screening aid, not a compliance decision.   Page ")
    _field(p, "PAGE")
    p.add_run(" of ")
    _field(p, "NUMPAGES")
    for r in p.runs:
        r.font.size = Pt(8)
    run.font.size = Pt(8)


def _table(doc, t: Table) -> None:
    from docx.shared import Pt

    parts = column_parts(t)
    for i, frame in enumerate(parts):
        caption = t.caption + (f" (columns, part {i + 1} of {len(parts)})" if len(parts) > 1 else "")
        if caption.strip():
            doc.add_paragraph(clean(caption.strip()), style="Caption")
        table = doc.add_table(rows=1, cols=frame.shape[1])
        table.style = "Table Grid"
        head = table.rows[0]
        _repeat_header(head)
        for cell, name in zip(head.cells, frame.columns):
            cell.text = clean(name)
            _shade(cell, HEADER_FILL)
            cell.paragraphs[0].runs[0].font.bold = True
        for values in frame.astype(str).itertuples(index=False, name=None):
            for cell, v in zip(table.add_row().cells, values):
                cell.text = clean(v)
        for row in table.rows:
            for cell in row.cells:
                for r in cell.paragraphs[0].runs:
                    r.font.size = Pt(7.5)
    if t.more:
        doc.add_paragraph(clean(t.more))


def _block(doc, b, width_cm: float) -> None:
    from docx.shared import Cm

    if isinstance(b, Paragraph):
        if b.style == "caution":
            _caution(doc, b.text)
        else:
            doc.add_paragraph(clean(b.text))
    elif isinstance(b, Bullets):
        for item in b.items:
            doc.add_paragraph(clean(item), style="List Bullet")
    elif isinstance(b, Heading):
        doc.add_heading(clean(b.text), level=3)
    elif isinstance(b, Table):
        _table(doc, b)
    elif isinstance(b, Figure):
        png = b.images.get("png")
        if png is None:
            doc.add_paragraph(clean(f"Chart {b.caption} was not drawn."))
        else:
            doc.add_picture(io.BytesIO(png), width=Cm(min(width_cm, 17.0)))
            doc.add_paragraph(clean(b.caption), style="Caption")


def _caution(doc, text: str) -> None:
    table = doc.add_table(rows=1, cols=1)
    table.style = "Table Grid"
    cell = table.rows[0].cells[0]
    _shade(cell, CAUTION_FILL)
    p = cell.paragraphs[0]
    p.add_run("Caution. ").bold = True
    p.add_run(clean(text))


def _orient(doc, landscape: bool):
    from docx.enum.section import WD_ORIENT, WD_SECTION

    last = doc.sections[-1]
    section = doc.add_section(WD_SECTION.NEW_PAGE)
    want = WD_ORIENT.LANDSCAPE if landscape else WD_ORIENT.PORTRAIT
    if section.orientation != want:
        section.orientation = want
        section.page_width, section.page_height = last.page_height, last.page_width
    return section


def build_docx(doc: Document):
    """The document as a python-docx ``Document`` (charts must be drawn as PNG first)."""
    import docx
    from docx.shared import Cm, Pt

    out = docx.Document()
    first = out.sections[0]
    first.page_width, first.page_height = Cm(21.0), Cm(29.7)
    for s in out.sections:
        s.left_margin = s.right_margin = Cm(1.8)
        s.top_margin = s.bottom_margin = Cm(1.6)
    out.styles["Normal"].font.size = Pt(10)
    out.core_properties.title = clean(doc.cover.title)
    out.core_properties.author = clean(doc.cover.prepared_by)
    _footer(first)
    out.add_heading(clean(doc.cover.title), level=0)
    if doc.cover.rows():
        table = out.add_table(rows=0, cols=2)
        for label, value in doc.cover.rows():
            cells = table.add_row().cells
            cells[0].text, cells[1].text = clean(label), clean(value)
            cells[0].paragraphs[0].runs[0].font.bold = True
    _caution(out, doc.caution)
    out.add_heading("Executive summary", level=1)
    for b in doc.summary:
        _block(out, b, 17.0)
    for number, s in doc.numbered():
        section = _orient(out, s.landscape)
        _footer(section)
        out.add_heading(clean(f"{number} {s.title}"), level=1)
        width = 24.0 if s.landscape else 17.0
        for b in s.blocks:
            _block(out, b, width)
    return out


def write_docx(doc: Document, path: str | Path) -> Path:
    """Write the document as a Word file (.docx). Returns the path."""
    p = Path(path)
    p.parent.mkdir(parents=True, exist_ok=True)
    build_docx(doc).save(p)
    return p
