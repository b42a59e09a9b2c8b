"""Reading an Excel ``.xlsx`` workbook as text tables, one per sheet, within caps.

An ``.xlsx`` file is a zip package of XML parts [ECMA-376]_. A few kilobytes of it can declare gigabytes of
XML, or a sheet whose stated size (``<dimension ref="A1:XFD1048576">``) makes a reader fill in
billions of empty cells. So before anything is parsed the package's directory is checked against
:attr:`~tracescreen.io.rawtable.ReadCaps.workbook_mb` (the uncompressed size of all parts; Python's
``zipfile`` never inflates a part past its stated size, so the stated sizes bound the work), the
sheet's own stated dimension is ignored, and rows and cells are counted as they are read against
``workbook_rows`` and ``workbook_cells``: a file past any cap is refused with a one-line message.

Excel date, date-time, time and duration cells are written in ISO form (see :func:`cell_text`).
"""

from __future__ import annotations

import datetime as dt
import io
import zipfile

import numpy as np
import pandas as pd

from tracescreen._internal.printable import printable
from tracescreen.io.caps import ReadCaps
from tracescreen.io.rawtable import (
    LoadError,
    LoadOptions,
    RawTable,
    check_required,
    find_header,
    finish,
    unique_headers,
)

MB = 1 << 20


def cell_text(v) -> str:
    """Text of a workbook cell: Excel date, date-time, time and duration cells in ISO form."""
    if v is None:
        return ""
    if isinstance(v, float) and v.is_integer() and abs(v) < 1e15:
        return str(int(v))
    if isinstance(v, dt.datetime):
        return v.isoformat(sep=" ")
    if isinstance(v, (dt.date, dt.time)):
        return v.isoformat()
    if isinstance(v, dt.timedelta):  # a time cell past 24 h, or a duration: as hh:mm:ss
        secs = int(round(v.total_seconds()))
        return f"{secs // 3600:02d}:{secs % 3600 // 60:02d}:{secs % 60:02d}"
    return str(v).strip()


def check_package(data: bytes, name: str, caps: ReadCaps) -> None:
    """LoadError unless ``data`` is a zip package whose parts expand within ``caps.workbook_mb``."""
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as z:
            infos = z.infolist()
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, EOFError):
        raise LoadError(f"{name}: not an Excel .xlsx workbook (the file is not a zip package)") from None
    expanded = sum(i.file_size for i in infos)
    if expanded > caps.workbook_mb * MB:
        raise LoadError(f"{name}: the workbook expands to {expanded / MB:,.0f} MB of XML, more than the "
                        f"{caps.workbook_mb:g} MB a workbook may have (--max-workbook-mb); save large data as CSV")


def _sheet_records(ws, where: str, caps: ReadCaps, cells_before: int) -> tuple[list[list[str]], int]:
    """The sheet's rows as lists of text, counting rows and cells against the caps."""
    ws.reset_dimensions()  # the stated dimension can claim any size: rows are as long as their last cell
    records: list[list[str]] = []
    cells = cells_before
    for r in ws.iter_rows(values_only=True):
        cells += len(r)
        if len(records) >= caps.workbook_rows:
            raise LoadError(f"{where}: more than {caps.workbook_rows:,} rows (--max-workbook-rows); "
                            "save large data as CSV")
        if cells > caps.workbook_cells:
            raise LoadError(f"{where}: more than {caps.workbook_cells:,} cells in the workbook "
                            "(--max-workbook-cells); save large data as CSV")
        records.append([cell_text(v) for v in r] if r else [])
    return records, cells


def read_xlsx(data: bytes, name: str, path: str, opts: LoadOptions) -> list[RawTable]:
    """One workbook's bytes as one :class:`RawTable` per sheet with the required columns."""
    import openpyxl  # imported here: only needed for Excel files

    check_package(data, name, opts.caps)
    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many types for damaged packages
        raise LoadError(f"{name}: cannot open the workbook ({exc.__class__.__name__}: "
                        f"{printable(str(exc))[:200]})") from None
    try:
        return _sheets(wb, name, path, opts)
    except LoadError:
        raise
    except Exception as exc:  # a damaged part found while reading (bad XML, a broken shared string)
        raise LoadError(f"{name}: cannot read the workbook ({exc.__class__.__name__}: "
                        f"{printable(str(exc))[:200]})") from None
    finally:
        wb.close()


def _sheets(wb, name: str, path: str, opts: LoadOptions) -> list[RawTable]:
    names = wb.sheetnames
    if opts.sheet is not None and opts.sheet not in names:
        raise LoadError(f"{name}: no sheet '{printable(opts.sheet)}' (sheets: {printable(', '.join(names))})")
    out: list[RawTable] = []
    skipped = []
    cells_read = 0
    for sheet in [opts.sheet] if opts.sheet else names:
        where = f"{name} [{printable(sheet)}]"
        records, cells_read = _sheet_records(wb[sheet], where, opts.caps, cells_read)
        try:
            h = find_header(records, where, opts.column_map)
            headers, notes = unique_headers(records[h], where)
            check_required(headers, where, opts)
        except LoadError as exc:
            if opts.sheet:
                raise
            skipped.append(f"{name}: sheet '{printable(sheet)}' skipped: {str(exc).split(': ', 1)[-1]}")
            continue
        n = len(headers)
        body = [(r + [""] * n)[:n] for r in records[h + 1:]]
        extra_cells = [any(x for x in r[n:]) for r in records[h + 1:]]
        cells = pd.DataFrame(body, columns=headers, dtype=str) if body else pd.DataFrame(columns=headers, dtype=str)
        rows = np.arange(len(cells), dtype=np.int64) + h + 2
        raw = finish(name, path, sheet, h + 1, cells, rows)
        raw.notes.extend(notes)
        if any(extra_cells):
            raw.cells["__field_count_error__"] = np.where(
                np.array(extra_cells)[raw.rows - h - 2], "cells beyond the last named column", "")
        out.append(raw)
    if not out:
        raise LoadError(f"{name}: no sheet has recognisable columns (sheets: {printable(', '.join(names))})")
    out[0].notes.extend(skipped)
    return out
