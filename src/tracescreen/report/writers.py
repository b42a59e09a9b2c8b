"""Writing output tables: CSV (fast, via pyarrow) and XLSX (openpyxl), safe against formula injection.

Spreadsheet programs run a cell that begins with ``=``, ``+``, ``-`` or ``@`` as a formula. Text
cells that begin so (and tab or carriage return) are written with a leading apostrophe, which
spreadsheets show as text; numbers (including negative numbers) stay numbers.

References
----------
[OWASP-CSV]_ (docs/references.md)
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Iterator

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

from tracescreen._internal.parallel import ordered_map, workers
from tracescreen.progress import report

FORMULA_START = r"^[=+\-@\t\r]"
XLSX_MAX_ROWS = 1_048_576


def neutralise_text(text: str) -> str:
    """One text value made formula-safe (a leading apostrophe where it could start a formula)."""
    return "'" + text if re.match(FORMULA_START, text) else text


def neutralise_formulas(df: pd.DataFrame) -> pd.DataFrame:
    """Copy of ``df`` whose text cells and column names cannot start a spreadsheet formula.

    Only text is changed: numbers, negative ones included, stay numbers, also in a column of mixed
    (object) type. Columns are replaced, never changed in place (the copy shares unchanged data).
    """
    out = df.copy(deep=False)
    out.columns = [neutralise_text(str(c)) for c in out.columns]
    for c in out.columns:
        s = out[c]
        if isinstance(s.dtype, pd.CategoricalDtype):  # only the categories need looking at
            cats = pd.Series(s.cat.categories.astype(str))
            mask = cats.str.match(FORMULA_START)
            if mask.any():
                out[c] = s.cat.rename_categories(cats.where(~mask, "'" + cats).tolist())
            continue
        if isinstance(s.dtype, pd.StringDtype) and s.dtype.storage == "pyarrow":
            # Arrow-backed text: matched by Arrow where it lies (no copy of the column, no Python per row)
            mask = pc.fill_null(pc.match_substring_regex(pa.array(s.array), FORMULA_START), False)
            if pc.any(mask).as_py():
                out[c] = s.where(~np.asarray(mask, dtype=bool), "'" + s)
            continue
        if pd.api.types.is_string_dtype(s.dtype) or s.dtype == object:
            is_text = s.map(type).eq(str) if s.dtype == object else s.notna()
            txt = s.where(is_text, "").astype(str)
            mask = txt.str.match(FORMULA_START) & is_text
            if mask.any():
                out[c] = s.where(~mask, "'" + txt)
    return out


def date_format(uniq: pd.DatetimeIndex) -> str:
    """The ISO format that shows every distinct date-time in full: the time only where one has a time,
    seconds only where one has seconds, fractions only where one has them."""
    if not len(uniq) or (uniq == uniq.normalize()).all():
        return "%Y-%m-%d"
    if (uniq == uniq.floor("min")).all():
        return "%Y-%m-%d %H:%M"
    return "%Y-%m-%d %H:%M:%S" if (uniq == uniq.floor("s")).all() else "%Y-%m-%d %H:%M:%S.%f"


def _format_dates(df: pd.DataFrame, days=None) -> pd.DataFrame:
    """Dates as ISO text, as categoricals of the distinct dates.

    ``days``: columns written as days (``YYYY-MM-DD``); the other date columns then carry the time
    (``YYYY-MM-DD HH:MM``, seconds where one has them). None: each column shows the time only where it has one.
    """
    out = df.copy(deep=False)
    for c in out.columns:
        if pd.api.types.is_datetime64_any_dtype(out[c]):
            codes, uniq = pd.factorize(out[c])
            uniq = pd.DatetimeIndex(uniq)
            fmt = date_format(uniq)
            if days is not None and c in days:  # a stream's parts share one format per column
                fmt = "%Y-%m-%d"
            elif days is not None and fmt == "%Y-%m-%d":
                fmt = "%Y-%m-%d %H:%M"
            text = pd.Index(uniq.strftime(fmt), dtype="str")
            text = text.append(pd.Index([""], dtype="str"))  # NaT: empty text
            out[c] = pd.Categorical.from_codes(np.where(codes < 0, len(text) - 1, codes), categories=text)
    return out


def prepare(df: pd.DataFrame) -> pd.DataFrame:
    """Dates as ISO text and formula-safe text cells: what every export writes."""
    return neutralise_formulas(_format_dates(df))


#: Rows per block when writing CSV: blocks are rendered in parallel and written in order, so that
#: memory holds a few blocks of text, never the whole file.
CSV_BLOCK_ROWS = 1 << 16


def _csv_block(table: pa.Table, header: bool) -> pa.Buffer:
    """One block of rows as CSV bytes (categoricals written as their text)."""
    table = pa.Table.from_arrays(
        [c.cast(c.type.value_type) if pa.types.is_dictionary(c.type) else c for c in table.columns],
        names=table.column_names)
    sink = pa.BufferOutputStream()
    pacsv.write_csv(table, sink, write_options=pacsv.WriteOptions(include_header=header, quoting_style="needed",
                                                                  batch_size=1 << 16))
    return sink.getvalue()


def csv_blocks(df: pd.DataFrame, header: bool = True, days=None) -> Iterator[pa.Buffer]:
    """``df`` as UTF-8 CSV bytes (ISO dates, formula-safe), in blocks of :data:`CSV_BLOCK_ROWS` rows.

    Blocks are rendered by Arrow's CSV writer on all cores (Arrow releases the interpreter lock)
    and yielded in order; ``header``: the first block starts with the header row. ``days``: see
    :func:`_format_dates`.
    """
    dated = _format_dates(df, days)
    # columns of Python objects (long texts, mixed values) are made safe and turned into Arrow
    # text block by block, so that a large text column is never held twice in full
    objects = [c for c in dated.columns if dated[c].dtype == object]
    table = pa.Table.from_pandas(neutralise_formulas(dated.drop(columns=objects)), preserve_index=False)
    if table.num_columns == 0:  # only object columns: a placeholder keeps the row count
        table = pa.table({"\x00rows": pa.nulls(len(dated))})
    names = [neutralise_text(str(c)) for c in dated.columns]

    def block(i: int) -> pa.Table:
        t = table.slice(i, CSV_BLOCK_ROWS)
        part = neutralise_formulas(dated[objects].iloc[i:i + CSV_BLOCK_ROWS])
        for c in part.columns:
            v = part[c]
            v = v.where(v.isna(), v.astype(str))  # each value as text; missing stays empty
            t = t.append_column(c, pa.Array.from_pandas(v.astype(object)))
        return t.select(names)

    if not len(dated) and not header:
        return
    blocks = ((block(i), header and i == 0) for i in range(0, max(len(dated), 1), CSV_BLOCK_ROWS))
    yield from ordered_map(_csv_block, blocks, workers(4))


def write_csv(df: pd.DataFrame, path: str | Path) -> Path:
    """Write ``df`` as UTF-8 CSV (header row, ISO dates, formula-safe). Returns the path.

    One table in one go; :class:`tracescreen.report.streams.TableStream` writes a table part by part.
    """
    p = Path(path)
    report("write", None, unit="files", detail=p.name)
    p.parent.mkdir(parents=True, exist_ok=True)
    with open(p, "wb") as f:
        for data in csv_blocks(df):
            f.write(data)
    return p


def xlsx_cell(value):
    """A value as a worksheet cell: missing values (NaN, NA, NaT) as empty cells."""
    if value is None or value is pd.NA or value is pd.NaT or (isinstance(value, float) and value != value):
        return None
    return value


#: Widest column in the workbook (characters) and rows sampled to size the columns.
XLSX_MAX_WIDTH, XLSX_WIDTH_SAMPLE = 60, 500


def number_format(values: pd.Series) -> str:
    """An Excel number format showing a numeric column to the decimals its values carry (at most 6):
    ``0`` for whole numbers, ``0.0##`` style otherwise (common practice: no padding beyond the data)."""
    v = values.to_numpy(dtype=float, na_value=np.nan)
    v = v[np.isfinite(v)]
    if v.size == 0 or np.all(v == np.round(v)):
        return "0"
    sample = v[:XLSX_WIDTH_SAMPLE]
    decimals = max(len(f"{x:.6f}".rstrip("0").split(".")[1]) for x in sample)
    return "0.0" + "#" * (min(decimals, 6) - 1)


def _column_widths(df: pd.DataFrame) -> list[float]:
    head = df.head(XLSX_WIDTH_SAMPLE)
    out = []
    for c in df.columns:
        longest = head[c].astype(str).str.len().max() if len(head) else 0
        out.append(float(min(max(len(str(c)), int(longest if longest == longest else 0)) + 2, XLSX_MAX_WIDTH)))
    return out


def _front_sheet(wb, front: list[tuple[str, str]]) -> None:
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.styles import Alignment, Font

    ws = wb.create_sheet(title="report")
    ws.column_dimensions["A"].width = 22
    ws.column_dimensions["B"].width = 110
    wrap = Alignment(wrap_text=True, vertical="top")
    for label, text in front:
        a, b = WriteOnlyCell(ws, neutralise_text(str(label))), WriteOnlyCell(ws, neutralise_text(str(text)))
        a.font, a.alignment, b.alignment = Font(bold=True), wrap, wrap
        ws.append([a, b])


def write_xlsx(sheets: dict[str, pd.DataFrame], path: str | Path, front: list[tuple[str, str]] | None = None) -> Path:
    """Write one sheet per table (formula-safe) with a frozen header row, an autofilter, column widths
    and number formats; ``front``: (label, text) rows of a first sheet named ``report`` (cover, caution,
    summary). Raises ValueError if a table is too long for Excel."""
    from openpyxl import Workbook
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter

    p = Path(path)
    p.parent.mkdir(parents=True, exist_ok=True)
    wb = Workbook(write_only=True)
    if front:
        _front_sheet(wb, front)
    for k, (name, df) in enumerate(sheets.items()):
        report("write", k, len(sheets), unit="sheets", detail=f"{p.name} [{name}]")
        if len(df) + 1 > XLSX_MAX_ROWS:
            raise ValueError(f"table '{name}' has {len(df)} rows, more than an Excel sheet holds; use CSV")
        ws = wb.create_sheet(title=str(name)[:31])
        safe = prepare(df)
        ws.freeze_panes = "A2"
        if safe.shape[1]:
            ws.auto_filter.ref = f"A1:{get_column_letter(safe.shape[1])}{len(safe) + 1}"
        for j, width in enumerate(_column_widths(safe), start=1):
            ws.column_dimensions[get_column_letter(j)].width = width
        head = []
        for c in safe.columns:
            cell = WriteOnlyCell(ws, str(c))
            cell.font = Font(bold=True)
            head.append(cell)
        ws.append(head)
        formats = {j: number_format(safe[c]) for j, c in enumerate(safe.columns)
                   if pd.api.types.is_float_dtype(safe[c])}
        for rec in safe.itertuples(index=False, name=None):
            row = [xlsx_cell(v) for v in rec]
            for j, fmt in formats.items():
                if row[j] is not None:
                    cell = WriteOnlyCell(ws, row[j])
                    cell.number_format = fmt
                    row[j] = cell
            ws.append(row)
    wb.save(p)
    return p
