"""Caps on what one lab file may make the reader hold, and the earliest plausible date.

Light to import (no pandas): the command line builds its options from these defaults. A hostile or
broken file past a cap (a header of 200,000 columns, a workbook "bomb" of a few kilobytes that
expands to gigabytes of XML or declares billions of cells) is refused within seconds with a
one-line message naming the option that raises the cap (README "Caps").
"""

from __future__ import annotations

from dataclasses import dataclass

#: Sampling and analysis dates before this are rejected as implausible (an option: --earliest-date).
EARLIEST_DATE = "1900-01-01"


@dataclass(frozen=True)
class ReadCaps:
    """How much one lab file may make the reader hold (each a command-line option; README "Caps").

    The defaults admit any real lab deliverable or portal download we know of (a full Excel sheet
    is 1,048,576 rows; WQX result-profile files have about 80 columns) and refuse a crafted file
    long before it exhausts memory. :meth:`upload` gives the stricter caps of the dashboard's
    Upload page (a shared server).
    """

    max_columns: int = 5_000            # fields in a CSV line among the first rows (header search)
    workbook_mb: float = 512.0          # uncompressed size of all parts of an .xlsx package [MB]
    workbook_rows: int = 1_048_576      # rows of one sheet (Excel's own maximum)
    workbook_cells: int = 30_000_000    # cells of one workbook (rows x columns as stored)

    @classmethod
    def upload(cls) -> ReadCaps:
        """The Upload page's caps (a browser upload on a shared server)."""
        return cls(max_columns=2_000, workbook_mb=100.0, workbook_rows=200_000, workbook_cells=4_000_000)
