"""Workbook "bombs": small .xlsx packages that declare or expand to far more than they hold.

An .xlsx file is a zip package of XML parts (ECMA-376 Part 2, Open Packaging Conventions); the parts
written here are the minimum a reader needs (content types, relationships, workbook, one sheet). Three
shapes, each the kind of file the issue's attack used (sizes from the attack are in issue 20):

* ``claimed``: a sheet whose ``<dimension>`` claims A1:XFD1048576 (17 billion cells) but holds 3 rows;
* ``far_cell``: a header, one data row and one cell at XFD1048576 (a reader that fills the gap holds
  a million empty rows and a row of 16,384 cells);
* ``ordinary``: a header and two data rows (a reference);
* ``deflate``: ``rows`` identical data rows (a multiple of 1,000), which deflate about 230:1.

Used by tests/test_io_workbook_bombs.py (small sizes, small caps) and bench/bench_hostile_input.py.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

HEADER = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result", "unit"]
ROW = ["S1", "A1", "2021-03-04", "Lead", "total", "5", "ug/L"]

_CT = ('<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
       '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
       '<Default Extension="xml" ContentType="application/xml"/>'
       '<Override PartName="/xl/workbook.xml" '
       'ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
       '<Override PartName="/xl/worksheets/sheet1.xml" '
       'ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>')
_RELS = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
         '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" '
         'Target="xl/workbook.xml"/></Relationships>')
_WB = ('<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
       'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>'
       '<sheet name="Results" sheetId="1" r:id="rId1"/></sheets></workbook>')
_WB_RELS = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" '
            'Target="worksheets/sheet1.xml"/></Relationships>')
_SHEET_OPEN = '<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'


def _row(r: int, cells: list[str]) -> str:
    cols = "ABCDEFG"
    return f'<row r="{r}">' + "".join(f'<c r="{cols[i]}{r}" t="inlineStr"><is><t>{v}</t></is></c>'
                                      for i, v in enumerate(cells)) + "</row>"


def write_bomb(path: Path, shape: str, rows: int = 1_000_000) -> Path:
    """Write a workbook of the given ``shape`` (see the module docstring) to ``path``."""
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as z:
        for name, text in (("[Content_Types].xml", _CT), ("_rels/.rels", _RELS), ("xl/workbook.xml", _WB),
                           ("xl/_rels/workbook.xml.rels", _WB_RELS)):
            z.writestr(name, text)
        with z.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as f:
            dim = '<dimension ref="A1:XFD1048576"/>' if shape == "claimed" else ""
            f.write((_SHEET_OPEN + dim + "<sheetData>" + _row(1, HEADER)).encode())
            if shape == "deflate":
                # rows and cells without their optional r attribute (ECMA-376 Part 1, 18.3.1.73 and
                # 18.3.1.4: the next row, the next column): identical rows compress about 230:1
                same = ("<row>" + "".join(f'<c t="inlineStr"><is><t>{v}</t></is></c>' for v in ROW) + "</row>") * 1000
                for _ in range(rows // 1000):
                    f.write(same.encode())
            else:  # claimed, far_cell and ordinary: two data rows
                f.write((_row(2, ROW) + _row(3, ROW)).encode())
            if shape == "far_cell":
                f.write(b'<row r="1048576"><c r="XFD1048576" t="inlineStr"><is><t>x</t></is></c></row>')
            f.write(b"</sheetData></worksheet>")
    return path
