"""Reading lab files (CSV, XLSX) as text tables: the entry point :func:`read_raw`.

:func:`read_raw` reads one file into one :class:`RawTable` per sheet (a CSV file is one sheet):
every cell as text, with its row number in the file. Nothing is interpreted here; the columns are
recognised by :mod:`tracescreen.io.columns` and the cells parsed by :mod:`tracescreen.io.normalise`.
CSV reading (encodings, malformed quoting) is in :mod:`tracescreen.io.csv_reading`, workbooks
(sheets, caps against workbook bombs) in :mod:`tracescreen.io.xlsx_reading`, what they share
(options, caps, header row) in :mod:`tracescreen.io.rawtable`.

Problems with a whole file (missing, unreadable, not UTF-8, a damaged workbook, past a cap, no
recognisable columns) raise :class:`LoadError` with a one-line message naming the file. A workbook
sheet without the required columns (notes, a legend) is skipped with a note naming it.
"""

from __future__ import annotations

from pathlib import Path

from tracescreen._internal.hashing import sha256_hex
from tracescreen._internal.printable import printable
from tracescreen.io.caps import ReadCaps
from tracescreen.io.rawtable import HEADER_SEARCH_ROWS, LoadError, LoadOptions, RawTable

__all__ = ["HEADER_SEARCH_ROWS", "LoadError", "LoadOptions", "RawTable", "ReadCaps", "read_raw", "sha256_of"]


def sha256_of(data: bytes) -> str:
    """SHA-256 of a file's bytes as hex (the file's identity in outputs and the workspace)."""
    return sha256_hex(data)


def check_lab_file(path: Path, shown: str | None = None) -> None:
    """Raise :class:`LoadError` unless ``path`` is a file: a folder is named as one (its files are
    given one by one, or with a shell pattern), anything else is not found."""
    shown = printable(path) if shown is None else shown
    if path.is_dir():
        raise LoadError(f"{shown}: a folder, not a lab file: give the files in it ({shown}/*.csv, {shown}/*.xlsx)")
    if not path.is_file():
        raise LoadError(f"{shown}: file not found")


def read_raw(path: str | Path, options: LoadOptions | None = None) -> tuple[list[RawTable], str]:
    """Read a CSV or XLSX file as text tables (one per sheet), with the file's SHA-256.

    Raises
    ------
    LoadError
        The file is missing, empty, binary, not UTF-8 (unless another encoding is given or a
        byte-order mark says which), a damaged workbook, past a cap of :class:`ReadCaps`, or has no
        recognisable header row.
    """
    opts = options or LoadOptions()
    p = Path(path)
    shown = printable(p)
    check_lab_file(p, shown)
    suffix = p.suffix.lower()
    name = printable(p.name)
    try:
        if suffix == ".xls":
            raise LoadError(f"{name}: old .xls workbooks are not read; save it as .xlsx or .csv")
        data = p.read_bytes()
        if suffix in (".xlsx", ".xlsm"):
            from tracescreen.io.xlsx_reading import read_xlsx

            return read_xlsx(data, name, str(p), opts), sha256_of(data)
        from concurrent.futures import ThreadPoolExecutor

        from tracescreen.io.csv_reading import read_csv

        with ThreadPoolExecutor(1) as hashing:  # hashlib releases the interpreter lock: hashed while it is read
            digest = hashing.submit(sha256_of, data)
            return [read_csv(data, name, str(p), opts)], digest.result()
    except MemoryError:
        raise LoadError(f"{name}: not enough memory to read this file") from None
    except OSError as exc:
        raise LoadError(f"{shown}: cannot read ({exc.strerror})") from None
