"""Reading a CSV lab file as a text table: encoding, delimiter, header row, malformed lines.

The fast path is Arrow's multi-threaded CSV reader. Whenever the file's records and lines do not
match one to one (a row with the wrong number of fields, a cell with a line break, an unclosed
quote), the exact path reads it again with Python's ``csv`` module line by line ([RFC4180]_ quoting), so that every line
is accounted for with its own row number:

* a quote left open (to the end of the file), or closed and followed by more text, is broken quoting,
  and so is a record that spans several lines with the wrong number of fields: its first line is
  rejected with that reason and reading resumes on the next line, so a quote left open on line 50
  of a 200-line file costs one row, not the 150 after it;
* a record with the wrong number of fields on one line is rejected ("expected n fields");
* a quoted cell with a line break inside a record of the right length is kept (row = its first line).

Cells of any size are read (the ``csv`` module's 128 KB field limit is lifted); a header wider than
:attr:`~tracescreen.io.rawtable.ReadCaps.max_columns` is refused before anything else is read.
Text with a byte-order mark is decoded by it (UTF-8, UTF-16, UTF-32), whatever ``--encoding`` says.
"""

from __future__ import annotations

import codecs
import csv
import io
import sys

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

from tracescreen.io.columns import score_header_row
from tracescreen.io.rawtable import (
    HEADER_SEARCH_ROWS,
    LoadError,
    LoadOptions,
    RawTable,
    find_header,
    finish,
    unique_headers,
)

_BOMS = ((codecs.BOM_UTF32_LE, "utf-32"), (codecs.BOM_UTF32_BE, "utf-32"), (codecs.BOM_UTF8, "utf-8-sig"),
         (codecs.BOM_UTF16_LE, "utf-16"), (codecs.BOM_UTF16_BE, "utf-16"))
FIELD_COUNT_ERROR = "__field_count_error__"
UNCLOSED_QUOTE = ("a quote (\") opened on this line is not closed where the row ends (or is closed and followed "
                  "by more text): the line is rejected and reading goes on with the next line; fix the quoting")


def _is_utf8(encoding: str) -> bool:
    return encoding.lower().replace("-", "").replace("_", "") in ("utf8", "utf8sig")


def _encoding(data: bytes, name: str, asked: str) -> str:
    """The file's encoding: its byte-order mark if it has one, else the one asked for.

    A file whose first 4 kB are more than 5 % NUL bytes is binary (or UTF-16/32 without a mark); a
    stray NUL in a cell is only a control character, shown escaped where the cell is echoed.
    """
    for bom, enc in _BOMS:
        if data.startswith(bom):
            return enc
    try:
        asked_name = codecs.lookup(asked).name
    except LookupError:
        raise LoadError(f"{name}: unknown encoding '{asked}'") from None
    head = data[:4096]
    if (head.count(b"\x00") > len(head) // 20 or _looks_binary(head, asked_name)) \
            and not asked_name.startswith(("utf-16", "utf-32")):
        raise LoadError(f"{name}: binary data, not a CSV text file (or UTF-16/32 text without a byte-order "
                        "mark: give --encoding utf-16-le, utf-16-be ...)")
    return asked


_CONTROL = bytes(b for b in range(32) if b not in (9, 10, 13))


def _looks_binary(head: bytes, encoding: str) -> bool:
    """Not text in ``encoding`` and more than 5 % control bytes (a text file in another encoding has
    almost none: it gets the "not ... text" message with the offending byte instead)."""
    try:
        head.decode(encoding)
        return False
    except UnicodeDecodeError as exc:
        if exc.start >= len(head) - 4:  # a character cut by the 4 kB window
            return False
    except LookupError:
        return False
    return len(head) - len(head.translate(None, _CONTROL)) > len(head) // 20


def _decode(data: bytes, name: str, encoding: str) -> str:
    try:
        return data.decode(encoding)
    except UnicodeDecodeError as exc:
        raise LoadError(
            f"{name}: not {encoding} text (byte 0x{data[exc.start]:02X} at offset {exc.start}); "
            f"save it as UTF-8 or give its encoding, e.g. --encoding latin-1"
        ) from None


def _head(body: bytes, n: int) -> bytes:
    """The first ``n`` lines of ``body`` however long they are (the header is never cut)."""
    end = 0
    for _ in range(n):
        nl = body.find(b"\n", end)
        if nl < 0:
            return body
        end = nl + 1
    return body[:end]


def _count_byte(body: bytes, byte: int, block: int = 1 << 22) -> int:
    """How many times ``byte`` occurs in ``body``: numpy on 4 MB blocks (bytes.count is 3-5x slower)."""
    a = np.frombuffer(body, dtype=np.uint8)
    return sum(int(np.count_nonzero(a[i:i + block] == byte)) for i in range(0, len(a), block))


def _line_count(body: bytes) -> int:
    """Lines as Arrow and ``csv`` count them (``\\n``, ``\\r\\n``, or ``\\r`` alone in old Mac files)."""
    nl = _count_byte(body, ord("\n"))
    if nl == 0:
        nl = body.count(b"\r")
        end = b"\r"
    else:
        end = b"\n"
    return nl + (0 if body.endswith(end) or not body else 1)


def read_csv(data: bytes, name: str, path: str, opts: LoadOptions) -> RawTable:
    """One CSV file's bytes as a :class:`RawTable` (LoadError for a file that cannot be read at all)."""
    encoding = _encoding(data, name, opts.encoding)
    if _is_utf8(encoding):  # Arrow reads the bytes and checks they are UTF-8; the text is decoded only if needed
        body = data[3:] if data.startswith(codecs.BOM_UTF8) else data
        text = None
    else:
        text = _decode(data, name, encoding)
        body = text.encode("utf-8")
    if not body or body.isspace():  # (not a stripped copy of the whole file)
        raise LoadError(f"{name}: the file is empty")
    head_lines = _head(body, HEADER_SEARCH_ROWS).decode("utf-8", errors="replace").splitlines()
    csv.field_size_limit(sys.maxsize if sys.maxsize < 2 ** 63 else 2 ** 62)  # cells of any size
    delim, head = _delimiter(head_lines, opts)
    widest = max(range(len(head)), key=lambda i: len(head[i]), default=0)
    if head and len(head[widest]) > opts.caps.max_columns:
        raise LoadError(f"{name}: line {widest + 1} has {len(head[widest])} fields, more than the "
                        f"{opts.caps.max_columns} columns a file may have (--max-columns)")
    h = find_header(head, name, opts.column_map)
    headers, notes = unique_headers(head[h], name)

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
        # a line feed inside a cell adds a line without a row, so equal counts rule it out; a lone
        # carriage return inside a cell is looked for only in a file that has one at all
        one_line_each = table.num_rows + h + 1 == _line_count(body) and not (b"\r" in body and _has_line_breaks(table))
    except pa.ArrowInvalid:
        table, one_line_each = None, False
    if invalid or not one_line_each:
        # Exact, slower path: Python's csv module, line by line, every line accounted for.
        text = _decode(data, name, encoding) if text is None else text  # names a non-UTF-8 byte
        cells, rows = _read_csv_exact(text, delim, h, headers)
    else:
        cells = table.to_pandas()
        rows = np.arange(len(cells), dtype=np.int64) + h + 2
    raw = finish(name, path, "", h + 1, cells, rows)
    raw.notes.extend(notes)
    return raw


DELIMITERS = (",", ";", "\t", "|")


def _delimiter(head_lines: list[str], opts: LoadOptions) -> tuple[str, list[list[str]]]:
    """The delimiter whose split of the first lines names the most tracescreen columns (a title block
    above the header has no delimiters to count), and the first lines split by it."""
    best = None
    for d in DELIMITERS:
        if not any(d in ln for ln in head_lines):
            continue
        records = list(csv.reader(head_lines, delimiter=d))
        if max((len(r) for r in records), default=0) > opts.caps.max_columns:
            return d, records  # refused by the caller, whatever the delimiter
        score = max((score_header_row([c.strip() for c in r], opts.column_map) for r in records), default=0)
        if best is None or score > best[0]:
            best = (score, d, records)
    if best is None:
        return ",", list(csv.reader(head_lines, delimiter=","))
    return best[1], best[2]


def _has_line_breaks(table: pa.Table) -> bool:
    """Whether any cell holds a line break (its row then spans several lines of the file)."""
    return any(pc.any(pc.match_substring_regex(col, "[\r\n]")).as_py() for col in table.columns)


def _records(lines: list[str], start: int, delim: str):
    """``(first line index, record, lines spanned)`` from line ``start`` on; a ``csv.Error`` ends the run
    with ``(line index, None, error text)``."""
    # strict: a quote that is not closed, or closed and followed by text, is an error, not a guess
    reader = csv.reader((lines[j] for j in range(start, len(lines))), delimiter=delim, strict=True)
    done = 0
    try:
        for rec in reader:
            yield start + done, rec, reader.line_num - done
            done = reader.line_num
    except csv.Error as exc:
        yield start + done, None, str(exc)


def _read_csv_exact(text: str, delim: str, h: int, headers: list[str]) -> tuple[pd.DataFrame, np.ndarray]:
    """Read every line with its row number (rows with a wrong field count or broken quoting are marked)."""
    lines = io.StringIO(text, newline="").readlines()
    n = len(headers)
    out, out_rows, errors = [], [], []
    pos = h + 1
    while pos < len(lines):
        resume = None
        for at, rec, span in _records(lines, pos, delim):
            good = rec is not None and ((len(rec) >= n and not any(x.strip() for x in rec[n:]))
                                        or not any(x.strip() for x in rec))
            if rec is None or (span > 1 and not good):
                # broken quoting (or a csv error): reject this one line, read on from the next
                one = next(csv.reader([lines[at].rstrip("\r\n")], delimiter=delim), [])
                out.append((one + [""] * n)[:n])
                quoting = rec is not None or "end of data" in str(span) or "expected after" in str(span)
                errors.append(UNCLOSED_QUOTE if quoting else f"unreadable line ({span})")
                out_rows.append(at + 1)
                resume = at + 1
                break
            out.append((rec + [""] * n)[:n])
            errors.append("" if good else f"expected {n} fields, found {len(rec)}")
            out_rows.append(at + 1)
        if resume is None:
            break
        pos = resume
    cells = pd.DataFrame(out, columns=headers, dtype=str) if out else pd.DataFrame(columns=headers, dtype=str)
    if any(errors):
        cells[FIELD_COUNT_ERROR] = errors
    return cells, np.array(out_rows, dtype=np.int64)
