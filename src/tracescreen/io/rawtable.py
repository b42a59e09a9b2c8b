"""What the file readers share: the text table of one sheet, the reading options, the header row.

:class:`RawTable` is one sheet (or CSV file) as text cells with their row numbers in the file;
:class:`LoadOptions` says how to read files, with its caps (:class:`tracescreen.io.caps.ReadCaps`). The CSV and workbook
readers are :mod:`tracescreen.io.csv_reading` and :mod:`tracescreen.io.xlsx_reading`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from tracescreen._internal.printable import printable
from tracescreen.io.caps import EARLIEST_DATE, ReadCaps
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
    caps: ReadCaps = field(default_factory=ReadCaps)
    earliest_date: str = EARLIEST_DATE   # dates before it are not plausible sampling dates (rejected)

    def __post_init__(self):
        if isinstance(self.caps, dict):  # options stored as JSON (a workspace's import record)
            self.caps = ReadCaps(**self.caps)


def find_header(records: list[list[str]], name: str, column_map: ColumnMap | None) -> int:
    """Index of the header row among the first :data:`HEADER_SEARCH_ROWS` records (LoadError if none)."""
    best, best_i = 0, -1
    for i, rec in enumerate(records[:HEADER_SEARCH_ROWS]):
        score = score_header_row([c.strip() for c in rec], column_map)
        if score > best:
            best, best_i = score, i
        if score >= len(REQUIRED):
            break
    if best < 3:
        first = next((r for r in records if any(c.strip() for c in r)), [])
        shown = printable(", ".join(c[:40] for c in first[:8] if c))
        raise LoadError(
            f"{name}: no recognisable columns in the first {HEADER_SEARCH_ROWS} rows "
            f"(first row: {shown}); give a column mapping with --columns"
        )
    return best_i


def unique_headers(headers: list[str], name: str) -> tuple[list[str], list[str]]:
    """Headers made unique (a repeat of ``X`` becomes ``X.1``), and a note for every repeated header.

    Only the first of several columns with the same header is read as that column; the note names
    the columns (by position, 1 = A) so that the user can choose with a column mapping.
    """
    seen: dict[str, int] = {}
    first_at: dict[str, int] = {}
    repeats: dict[str, list[int]] = {}
    out = []
    for i, h in enumerate(headers):
        h = h.strip() or f"column_{i + 1}"
        if h in seen:
            seen[h] += 1
            repeats.setdefault(h, [first_at[h]]).append(i + 1)
            h = f"{h}.{seen[h]}"
        else:
            seen[h] = 0
            first_at[h] = i + 1
        out.append(h)
    notes = [f"{name}: columns {', '.join(map(str, cols))} are all headed '{printable(h[:80])}': only column "
             f"{cols[0]} is read as '{printable(h[:80])}' (the others are kept as '{printable(h[:80])}.1' ... "
             "in rejected rows); rename or map them with --columns"
             for h, cols in repeats.items()]
    return out, notes


def check_required(headers: list[str], where: str, opts: LoadOptions) -> None:
    """LoadError naming the required columns a header row lacks (mapped, combined, derived and
    default columns and parameter codes count)."""
    cells = pd.DataFrame(columns=headers)
    found = recognise_columns(headers, opts.column_map)
    applies = mapping_applies(headers, opts.column_map)
    missing = missing_required(cells, found, opts.column_map, applies)
    if missing:
        raise LoadError(f"{where}: required column(s) {', '.join(missing)} not found (headers: "
                        f"{printable(', '.join(str(h)[:40] for h in headers[:12]))}); give a column mapping with --columns")


def finish(name, path, sheet, header_row, cells, rows) -> RawTable:
    """The :class:`RawTable` of a sheet's cells, rows whose every cell is empty counted and dropped."""
    cells = cells.fillna("").astype(str) if len(cells.columns) else cells
    blank = np.ones(len(cells), dtype=bool)
    for c in cells.columns:  # a loop over columns, not rows; done once no row is empty so far
        blank &= (cells[c] == "").to_numpy()
        if not blank.any():
            break
    if not blank.any():
        return RawTable(name, path, sheet, header_row, cells, rows, 0)
    return RawTable(name, path, sheet, header_row, cells[~blank].reset_index(drop=True), rows[~blank],
                    int(blank.sum()))
