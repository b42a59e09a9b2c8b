"""Output tables written part by part: CSV, Parquet or XLSX, one file per table, memory bounded by a part.

A run in partitions of whole sites (:mod:`tracescreen.streaming`) hands each output table its
rows part after part; :class:`TableStream` appends them to the table's file, so no table is ever
held whole. The formats (:mod:`tracescreen.report.formats`):

* CSV: the blocks of :func:`tracescreen.report.writers.csv_blocks` (formula-safe, ISO dates), the
  header once;
* Parquet: one row group per part ([Parquet]_ through pyarrow); text columns are
  dictionary-encoded (``dictionary<int32, string>``, read back by pandas as categoricals; each row
  group's dictionary holds the texts of its own part, in their order in the run; the few columns of
  texts that never repeat keep that type but are stored plain,
  :data:`~tracescreen.report.formats.FREE_TEXT`), date
  columns are Parquet ``DATE`` (days) or ``TIMESTAMP`` (millisecond) values, numbers stay numbers;
  the columns are the CSV's. Text is written as it is (a Parquet file is read by programs, not
  opened as a spreadsheet), so it has no formula-guard apostrophes;
* XLSX: a write-only workbook (openpyxl); past :data:`~tracescreen.report.formats.SPREADSHEET_ROWS`
  rows the table continues on a further sheet.

A file appears complete or not at all: rows go to a temporary name beside the target, renamed over
it when the table is closed (:func:`begin_file`, :func:`finish_file`, :func:`discard_file`).

References
----------
[Parquet]_ (docs/references.md)
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from tracescreen._internal.frames import used_only
from tracescreen._internal.hashing import HashingWriter
from tracescreen.report.formats import FORMATS, FREE_TEXT, SPREADSHEET_ROWS, too_long_for_spreadsheet

TEXT = pa.dictionary(pa.int32(), pa.string())


def begin_file(path: Path) -> Path:
    """The temporary name a table is written under until it is complete."""
    path.parent.mkdir(parents=True, exist_ok=True)
    return path.with_name(f".{path.name}.partial")


def finish_file(tmp: Path, path: Path) -> Path:
    """Put the complete file in place (an atomic rename on one file system)."""
    os.replace(tmp, path)
    return path


def discard_file(tmp: Path) -> None:
    """Remove the temporary file of a table that was not completed."""
    tmp.unlink(missing_ok=True)


def days_of(frame: pd.DataFrame) -> set[str]:
    """Date columns of ``frame`` whose values are all whole days (no time of day)."""
    out = set()
    for c in frame.columns:
        s = frame[c]
        if pd.api.types.is_datetime64_any_dtype(s.dtype):
            v = s.dropna()
            if (v == v.dt.normalize()).all():
                out.add(c)
    return out


def _free_text_array(values: pd.Series) -> pa.Array | pa.ChunkedArray:
    """A column of texts that do not repeat as ``dictionary<int32, string>`` without hashing them: the
    dictionary is the texts themselves, in row order (index i for row i; one dictionary per Arrow chunk
    of the column, so its text is never copied into one buffer), and the Parquet writer stores the values
    plain (see :data:`~tracescreen.report.formats.FREE_TEXT`)."""
    if isinstance(values.dtype, pd.StringDtype) and values.dtype.storage == "pyarrow":
        text = pa.array(values.array)
        chunks = text.chunks if isinstance(text, pa.ChunkedArray) else [text]
    else:  # categorical or object cells: each as its text
        chunks = [_text_array(values).dictionary_decode()]
    out = []
    for c in chunks:
        c = c.cast(pa.string())  # large or view text: the same bytes, 32-bit offsets
        index = pa.array(np.arange(len(c), dtype=np.int32), mask=c.is_null().to_numpy(zero_copy_only=False))
        out.append(pa.DictionaryArray.from_arrays(index, c.fill_null("") if c.null_count else c))  # missing: no index
    return out[0] if len(out) == 1 else pa.chunked_array(out, type=TEXT)


def _text_array(values: pd.Series) -> pa.Array:
    """A text (or categorical) column as ``dictionary<int32, string>``; missing values stay missing."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        # the part's dictionary holds only the categories the part uses: a run's categories can be every
        # sample id of the run (a million), which every row group would otherwise carry and encode again
        values = used_only(values)
        codes = values.cat.codes.to_numpy().astype(np.int32)
        cats = values.cat.categories
        if isinstance(cats.dtype, pd.StringDtype) and cats.dtype.storage == "pyarrow":
            dictionary = pa.array(cats.array)  # Arrow-backed categories are taken as they are
            if isinstance(dictionary, pa.ChunkedArray):
                dictionary = dictionary.combine_chunks()
            dictionary = dictionary.cast(pa.string())
        else:
            dictionary = pa.array(np.asarray(cats.astype(str), dtype=object), type=pa.string())
        return pa.DictionaryArray.from_arrays(pa.array(codes, mask=codes < 0), dictionary)
    if isinstance(values.dtype, pd.StringDtype) and values.dtype.storage == "pyarrow":
        arr = pa.array(values.array)  # Arrow-backed text is taken as it is (no Python string per row)
        if isinstance(arr, pa.ChunkedArray):
            arr = arr.combine_chunks()
        return arr.dictionary_encode().cast(TEXT)
    missing = values.isna().to_numpy()
    text = values.to_numpy(dtype=object).copy()
    text[missing] = None
    # mixed cells (numbers among text): each as its text; infer_dtype looks at the cells in C and
    # stops at the first that is not text, so text-only columns cost no Python call per row
    if values.dtype == object and pd.api.types.infer_dtype(text, skipna=True) not in ("string", "empty"):
        odd = ~missing & ~np.fromiter((isinstance(v, str) for v in text), bool, len(text))
        text[odd] = [str(v) for v in text[odd]]
    return pa.array(text, type=pa.string()).dictionary_encode().cast(TEXT)


def arrow_part(frame: pd.DataFrame, days: set[str], free_text=()) -> pa.Table:
    """One part of a table as Arrow columns for Parquet (see the module docstring); the columns named in
    ``free_text`` hold texts that do not repeat (:data:`~tracescreen.report.formats.FREE_TEXT`)."""
    cols = {}
    for c in frame.columns:
        s = frame[c]
        dtype = s.dtype
        if isinstance(dtype, pd.CategoricalDtype) or dtype == object or pd.api.types.is_string_dtype(dtype):
            cols[str(c)] = _free_text_array(s) if c in free_text else _text_array(s)
        elif pd.api.types.is_datetime64_any_dtype(dtype):
            arr = pa.array(s.astype("datetime64[ms]").to_numpy(), mask=s.isna().to_numpy(), type=pa.timestamp("ms"))
            cols[str(c)] = arr.cast(pa.date32()) if c in days else arr
        else:
            cols[str(c)] = pa.Array.from_pandas(s)
    return pa.table(cols)


class TableStream:
    """One output table, written part by part (see the module docstring).

    Parameters
    ----------
    path : path
        The file to write (its suffix is not changed).
    fmt : str
        ``csv``, ``parquet`` or ``xlsx``.
    name : str, optional
        The table's name in messages and as the XLSX sheet name (default: the file's stem).
    days : set of str, optional
        Date columns written as days; other date columns carry the time. Default: the date columns
        whose values in the first part are whole days.

    Examples
    --------
    >>> import pandas as pd, tempfile, pathlib
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "t.parquet"
    >>> with TableStream(path, "parquet") as t:
    ...     t.write(pd.DataFrame({"site_id": ["A", "A"], "value_ug_L": [1.0, 2.0]}))
    ...     t.write(pd.DataFrame({"site_id": ["B"], "value_ug_L": [3.0]}))
    >>> t.rows, pd.read_parquet(path)["site_id"].tolist()
    (3, ['A', 'A', 'B'])
    """

    def __init__(self, path, fmt: str, name: str | None = None, days: set[str] | None = None):
        if fmt not in FORMATS:
            raise ValueError(f"unknown format {fmt!r}; choose one of {', '.join(FORMATS)}")
        self.path, self.fmt = Path(path), fmt
        self.name = name or self.path.stem
        self.days = None if days is None else set(days)
        self.rows = 0
        self.columns: list[str] | None = None
        self._tmp = begin_file(self.path)
        self._out = None  # the open file, Parquet writer or workbook
        self._file = None  # CSV and Parquet: the file, hashed as it is written
        self._sheet = None
        #: SHA-256 of the complete file (CSV and Parquet, once closed; None for XLSX)
        self.sha256: str | None = None

    # -- writing

    def write(self, frame: pd.DataFrame) -> None:
        """Append the rows of ``frame`` (the first part fixes the columns; later parts must have them)."""
        if self.columns is None:
            self.columns = [str(c) for c in frame.columns]
            if self.days is None:
                self.days = days_of(frame)
        elif [str(c) for c in frame.columns] != self.columns:
            frame = self._aligned(frame)
        getattr(self, f"_write_{self.fmt}")(frame)
        self.rows += len(frame)

    def _aligned(self, frame: pd.DataFrame) -> pd.DataFrame:
        extra = [c for c in frame.columns if str(c) not in self.columns]
        if extra:
            raise ValueError(f"{self.name}: a later part has columns the first part has not: {', '.join(map(str, extra))}")
        return frame.reindex(columns=self.columns)

    def _write_csv(self, frame: pd.DataFrame) -> None:
        from tracescreen.report.writers import csv_blocks

        header = self._out is None
        if header:
            self._out = self._file = HashingWriter(self._tmp)
        for data in csv_blocks(frame, header=header, days=self.days):
            self._out.write(data)

    def _write_parquet(self, frame: pd.DataFrame) -> None:
        import pyarrow.parquet as pq

        free = FREE_TEXT.get(self.name, ())
        table = arrow_part(frame, self.days, free)
        if self._out is None:
            schema = pa.schema([pa.field(f.name, TEXT if pa.types.is_null(f.type) else f.type) for f in table.schema])
            self._file = HashingWriter(self._tmp)
            coded = [c for c in schema.names if c not in free]  # the free texts are stored plain
            self._out = pq.ParquetWriter(self._file, schema, compression="snappy",
                                         use_dictionary=coded if len(coded) < len(schema.names) else True)
        schema = self._out.schema
        try:
            table = table.cast(schema)
        except (pa.ArrowInvalid, pa.ArrowNotImplementedError) as exc:
            raise ValueError(f"{self.name}: a part's columns differ in type from the first part's ({exc})") from None
        self._out.write_table(table)

    def _write_xlsx(self, frame: pd.DataFrame) -> None:
        from tracescreen.report.writers import prepare, xlsx_cell

        if self._out is None:
            from openpyxl import Workbook

            self._out = Workbook(write_only=True)
        safe = prepare(frame)
        for rec in safe.itertuples(index=False, name=None):
            if self._sheet is None or self._sheet_rows >= SPREADSHEET_ROWS:
                self._new_sheet(safe.columns)
            self._sheet.append([xlsx_cell(v) for v in rec])
            self._sheet_rows += 1

    def _new_sheet(self, columns) -> None:
        n = len(self._out.worksheets)
        self._sheet = self._out.create_sheet(title=(self.name if n == 0 else f"{self.name} ({n + 1})")[:31])
        self._sheet.append([str(c) for c in columns])
        self._sheet_rows = 1

    # -- closing

    @property
    def warning(self) -> str | None:
        """What the run says about this table's length (None when a spreadsheet opens it whole)."""
        return too_long_for_spreadsheet(self.name, self.rows, self.fmt)

    def close(self) -> Path:
        """Finish the file and put it in place; returns its path. A table given no part is written empty."""
        if self._out is None:
            if self.columns is None:
                self.columns = []
                self.days = set()
            getattr(self, f"_write_{self.fmt}")(pd.DataFrame({c: pd.Series(dtype=object) for c in self.columns}))
        if self.fmt == "xlsx":
            if self._sheet is None:
                self._new_sheet(self.columns)
            self._out.save(self._tmp)
        else:
            self._out.close()
            self._file.close()
            self.sha256 = self._file.hexdigest()
        self._out = self._file = None
        return finish_file(self._tmp, self.path)

    def abort(self) -> None:
        """Stop writing and remove the unfinished file (the target is left as it was)."""
        if self._out is not None and self.fmt != "xlsx":
            self._out.close()
        if self._file is not None:
            self._file.close()
        self._out = self._file = None
        discard_file(self._tmp)

    def __enter__(self) -> "TableStream":
        return self

    def __exit__(self, kind, value, tb) -> None:
        if kind is None:
            self.close()
        else:
            self.abort()


def write_table(frame: pd.DataFrame, path, fmt: str, name: str | None = None, days: set[str] | None = None) -> TableStream:
    """Write one whole table in ``fmt`` (a stream of one part); returns the closed stream (path, rows, warning)."""
    from tracescreen.progress import report

    report("write", None, unit="files", detail=f"{name or Path(path).stem}.{fmt}")
    with TableStream(path, fmt, name, days) as stream:
        stream.write(frame)
    return stream
