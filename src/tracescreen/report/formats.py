"""The file formats of the output tables, and what a spreadsheet can hold (light to import: the CLI's choices).

* ``csv`` -- UTF-8 text, one file per table (the default: spreadsheets are where most users work);
* ``parquet`` -- Apache Parquet, one file per table: text columns dictionary-encoded, dates as
  dates, numbers as numbers, the same columns as the CSV ([Parquet]_);
* ``xlsx`` -- Office Open XML workbook, one file per table ([ECMA376]_).

A worksheet holds at most :data:`SPREADSHEET_ROWS` rows (1,048,576, header row included; ECMA-376
and the limits spreadsheet programs document). A longer table is still written whole (CSV; the
XLSX file continues on further sheets), and the run says so and suggests Parquet.

References
----------
[Parquet]_, [ECMA376]_ (docs/references.md)
"""

from __future__ import annotations

#: Output formats of ``screen``, ``trends`` and ``report --tables``; the first is the default.
FORMATS: tuple[str, ...] = ("csv", "parquet", "xlsx")

#: Text columns of a table whose rows each hold their own text (the results listed behind a period
#: value, about a kilobyte each). In Parquet they keep the dictionary type of every text column, so a
#: reader gets the same column type, but their values are stored plain: a dictionary of texts that
#: never repeat only stores them twice, and building it means hashing every text (Parquet writers fall
#: back to plain pages for such columns anyway).
FREE_TEXT: dict[str, tuple[str, ...]] = {"periods": ("results",)}

#: Rows a worksheet holds, header row included.
SPREADSHEET_ROWS = 1_048_576


def file_name(table: str, fmt: str) -> str:
    """File name of an output table in a format.

    >>> file_name("screening", "parquet")
    'screening.parquet'
    """
    if fmt not in FORMATS:
        raise ValueError(f"unknown format {fmt!r}; choose one of {', '.join(FORMATS)}")
    return f"{table}.{fmt}"


def too_long_for_spreadsheet(name: str, rows: int, fmt: str) -> str | None:
    """The warning for a table longer than a worksheet holds (None when it fits or the format is Parquet).

    >>> too_long_for_spreadsheet("screening", 10, "csv") is None
    True
    >>> print(too_long_for_spreadsheet("screening", 2_000_000, "csv"))  # doctest: +ELLIPSIS
    screening: 2,000,000 rows, more than a spreadsheet opens (1,048,575 below the header); ... --format parquet ...
    """
    if fmt == "parquet" or rows + 1 <= SPREADSHEET_ROWS:
        return None
    where = ("the workbook continues on further sheets" if fmt == "xlsx"
             else "the CSV file is complete, but a spreadsheet program shows only its first rows")
    return (f"{name}: {rows:,} rows, more than a spreadsheet opens ({SPREADSHEET_ROWS - 1:,} below the header); "
            f"{where}. Use --format parquet for tables this long (pandas, R arrow and DuckDB read it).")
