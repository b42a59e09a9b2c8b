"""Reading lab files (CSV, XLSX) as text tables: encoding, delimiter, header row, sheets.

:func:`read_raw` reads one file into one :class:`RawTable` per sheet (a CSV file is one sheet):
every cell as text, with its row number in the file. Nothing is interpreted here; the columns are
recognised by :mod:`tracescreen.io.columns` and the cells parsed by :mod:`tracescreen.io.normalise`.

Problems with a whole file (missing, unreadable, not UTF-8, a damaged workbook, no recognisable
columns) raise :class:`LoadError` with a one-line message naming the file. A workbook sheet
without the required columns (notes, a legend) is skipped with a note naming it.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv

from tracescreen._internal.hashing import sha256_hex
from tracescreen.io.columns import REQUIRED, recognise_columns, score_header_row
from tracescreen.io.mapping import ColumnMap, mapping_applies, missing_required

HEADER_SEARCH_ROWS = 30


class LoadError(ValueError):
    """A file that cannot be read at all (the message names the file and the problem)."""


@dataclass
class RawTable:
    """The cells of one sheet (or CSV file) as text, with their row numbers in the file."""

    file: str
    path: str
    sheet: str
    header_row: int
    cells: pd.DataFrame            # original headers, all text ("" for empty)
    rows: np.ndarray               # 1-based row number in the file of each row of ``cells``
    blank_rows: int = 0
    notes: list[str] = field(default_factory=list)  # what the reader skipped (workbook sheets)


@dataclass
class LoadOptions:
    """How to read the files (each a command-line option)."""

    column_map: ColumnMap | None = None
    date_order: str = "iso"
    decimal_comma: bool = False
    encoding: str = "utf-8"
    default_fraction: str | None = None
    sheet: str | None = None


# reading files as text
# --------------------------------------------------------------------------------------------

def sha256_of(data: bytes) -> str:
    """SHA-256 of a file's bytes as hex (the file's identity in outputs and the workspace)."""
    return sha256_hex(data)


def _decode(data: bytes, name: str, encoding: str) -> str:
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode(encoding)
    except UnicodeDecodeError as exc:
        raise LoadError(
            f"{name}: not {encoding} text (byte 0x{data[exc.start]:02X} at offset {exc.start}); "
            f"save it as UTF-8 or give its encoding, e.g. --encoding latin-1"
        ) from None
    except LookupError:
        raise LoadError(f"{name}: unknown encoding '{encoding}'") from None


def _find_header(records: list[list[str]], name: str, column_map: ColumnMap | None) -> int:
    best, best_i = 0, -1
    for i, rec in enumerate(records[:HEADER_SEARCH_ROWS]):
        score = score_header_row([c.strip() for c in rec], column_map)
        if score > best:
            best, best_i = score, i
        if score >= len(REQUIRED):
            break
    if best < 3:
        first = next((r for r in records if any(c.strip() for c in r)), [])
        raise LoadError(
            f"{name}: no recognisable columns in the first {HEADER_SEARCH_ROWS} rows "
            f"(first row: {', '.join(c for c in first[:8] if c)}); give a column mapping with --columns"
        )
    return best_i


def _unique_headers(headers: list[str]) -> list[str]:
    seen: dict[str, int] = {}
    out = []
    for i, h in enumerate(headers):
        h = h.strip() or f"column_{i + 1}"
        if h in seen:
            seen[h] += 1
            h = f"{h}.{seen[h]}"
        else:
            seen[h] = 0
        out.append(h)
    return out


def _read_csv(path: Path, opts: LoadOptions) -> tuple[list[RawTable], str]:
    data = path.read_bytes()
    digest = sha256_of(data)
    name = path.name
    if b"\x00" in data[:4096]:
        raise LoadError(f"{name}: binary data, not a CSV text file")
    utf8 = opts.encoding.lower().replace("-", "").replace("_", "") in ("utf8", "utf8sig")
    if utf8:  # Arrow reads the bytes and checks they are UTF-8; the whole text is decoded only if needed
        body = data[3:] if data.startswith(b"\xef\xbb\xbf") else data
        text = None
        head_text = body[:1 << 20].decode("utf-8", errors="replace")
    else:
        text = _decode(data, name, opts.encoding)
        body = text.encode("utf-8")
        head_text = text[:1 << 20]
    if not body.strip():
        raise LoadError(f"{name}: the file is empty")
    head_lines = head_text.splitlines()[:HEADER_SEARCH_ROWS]
    first = next((ln for ln in head_lines if ln.strip()), "")
    delim = max([",", ";", "\t", "|"], key=first.count)
    head = list(csv.reader(head_lines, delimiter=delim))
    h = _find_header(head, name, opts.column_map)
    headers = _unique_headers(head[h])

    invalid: list[str] = []

    def on_invalid(row):  # pyarrow calls this for rows with the wrong number of fields
        invalid.append(row.text)
        return "skip"

    try:
        table = pacsv.read_csv(
            pa.BufferReader(body),
            read_options=pacsv.ReadOptions(skip_rows=h + 1, column_names=headers, block_size=1 << 24),
            parse_options=pacsv.ParseOptions(delimiter=delim, invalid_row_handler=on_invalid,
                                              ignore_empty_lines=False, newlines_in_values=True),
            convert_options=pacsv.ConvertOptions(column_types={c: pa.string() for c in headers},
                                                 strings_can_be_null=False, quoted_strings_can_be_null=False),
        )
        cells = table.to_pandas()
        rows = np.arange(len(cells), dtype=np.int64) + h + 2
    except pa.ArrowInvalid:
        invalid.append("parse error")
        cells, rows = None, None
    if invalid:
        # Exact, slower path: Python's csv module keeps every record with its line number.
        text = _decode(data, name, opts.encoding) if text is None else text  # names a non-UTF-8 byte
        cells, rows, (bad_cells, bad_rows) = _read_csv_exact(text, delim, h, headers)
        raw = _finish(name, str(path), "", h + 1, cells, rows)
        raw.cells = pd.concat([raw.cells, bad_cells], ignore_index=True).fillna("")
        raw.rows = np.concatenate([raw.rows, bad_rows])
        order = np.argsort(raw.rows, kind="stable")
        raw.cells, raw.rows = raw.cells.iloc[order].reset_index(drop=True), raw.rows[order]
    else:
        raw = _finish(name, str(path), "", h + 1, cells, rows)
    return [raw], digest


def _read_csv_exact(text: str, delim: str, h: int, headers: list[str]):
    """Read every record with its row number; rows with a wrong field count are marked."""
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    good, good_rows, bad, bad_rows = [], [], [], []
    n = len(headers)
    for i, rec in enumerate(reader):
        if i <= h:
            continue
        if len(rec) == n or (len(rec) > n and not any(x.strip() for x in rec[n:])):
            good.append(rec[:n])
            good_rows.append(i + 1)
        elif not any(x.strip() for x in rec):
            good.append([""] * n)
            good_rows.append(i + 1)
        else:
            padded = (rec + [""] * n)[:n]
            bad.append(padded + [f"expected {n} fields, found {len(rec)}"])
            bad_rows.append(i + 1)
    cells = pd.DataFrame(good, columns=headers, dtype=str) if good else pd.DataFrame(columns=headers, dtype=str)
    badf = pd.DataFrame(bad, columns=headers + ["__field_count_error__"], dtype=str)
    return cells, np.array(good_rows, dtype=np.int64), (badf, np.array(bad_rows, dtype=np.int64))


def _cell_text(v) -> str:
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


def _read_xlsx(path: Path, opts: LoadOptions) -> tuple[list[RawTable], str]:
    import openpyxl  # imported here: only needed for Excel files

    data = path.read_bytes()
    digest = sha256_of(data)
    name = path.name
    if not zipfile.is_zipfile(io.BytesIO(data)):
        raise LoadError(f"{name}: not an Excel .xlsx workbook (the file is not a zip package)")
    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many types for damaged packages
        raise LoadError(f"{name}: cannot open the workbook ({exc.__class__.__name__}: {exc})") from None
    names = wb.sheetnames
    if opts.sheet is not None and opts.sheet not in names:
        raise LoadError(f"{name}: no sheet '{opts.sheet}' (sheets: {', '.join(names)})")
    out: list[RawTable] = []
    skipped = []
    for sheet in [opts.sheet] if opts.sheet else names:
        records = [[_cell_text(v) for v in r] for r in wb[sheet].iter_rows(values_only=True)]
        try:
            h = _find_header(records, f"{name} [{sheet}]", opts.column_map)
            headers = _unique_headers(records[h])
            _check_required(headers, f"{name} [{sheet}]", opts)
        except LoadError as exc:
            if opts.sheet:
                raise
            skipped.append(f"{name}: sheet '{sheet}' skipped: {str(exc).split(': ', 1)[-1]}")
            continue
        n = len(headers)
        body = [(r + [""] * n)[:n] for r in records[h + 1:]]
        extra_cells = [any(x for x in r[n:]) for r in records[h + 1:]]
        cells = pd.DataFrame(body, columns=headers, dtype=str) if body else pd.DataFrame(columns=headers, dtype=str)
        rows = np.arange(len(cells), dtype=np.int64) + h + 2
        raw = _finish(name, str(path), sheet, h + 1, cells, rows)
        if any(extra_cells):
            raw.cells["__field_count_error__"] = np.where(
                np.array(extra_cells)[raw.rows - h - 2], "cells beyond the last named column", "")
        out.append(raw)
    wb.close()
    if not out:
        raise LoadError(f"{name}: no sheet has recognisable columns (sheets: {', '.join(names)})")
    out[0].notes.extend(skipped)
    return out, digest


def _check_required(headers: list[str], where: str, opts: LoadOptions) -> None:
    """LoadError naming the required columns a header row lacks (mapped, combined, derived and
    default columns and parameter codes count)."""
    cells = pd.DataFrame(columns=headers)
    found = recognise_columns(headers, opts.column_map)
    applies = mapping_applies(headers, opts.column_map)
    missing = missing_required(cells, found, opts.column_map, applies)
    if missing:
        raise LoadError(f"{where}: required column(s) {', '.join(missing)} not found (headers: "
                        f"{', '.join(map(str, headers[:12]))}); give a column mapping with --columns")


def _finish(name, path, sheet, header_row, cells, rows) -> RawTable:
    cells = cells.fillna("").astype(str) if len(cells.columns) else cells
    blank = np.ones(len(cells), dtype=bool)
    for c in cells.columns:  # a loop over columns, not rows
        blank &= (cells[c] == "").to_numpy()
    if not blank.any():
        return RawTable(name, path, sheet, header_row, cells, rows, 0)
    return RawTable(name, path, sheet, header_row, cells[~blank].reset_index(drop=True), rows[~blank],
                    int(blank.sum()))


def read_raw(path: str | Path, options: LoadOptions | None = None) -> tuple[list[RawTable], str]:
    """Read a CSV or XLSX file as text tables (one per sheet), with the file's SHA-256.

    Raises
    ------
    LoadError
        The file is missing, empty, binary, not UTF-8 (unless another encoding is given), a damaged
        workbook, or has no recognisable header row.
    """
    opts = options or LoadOptions()
    p = Path(path)
    if not p.is_file():
        raise LoadError(f"{p}: file not found")
    suffix = p.suffix.lower()
    try:
        if suffix in (".xlsx", ".xlsm"):
            return _read_xlsx(p, opts)
        if suffix == ".xls":
            raise LoadError(f"{p.name}: old .xls workbooks are not read; save it as .xlsx or .csv")
        return _read_csv(p, opts)
    except OSError as exc:
        raise LoadError(f"{p}: cannot read ({exc.strerror})") from None


# --------------------------------------------------------------------------------------------
# normalising
# --------------------------------------------------------------------------------------------
