"""Loading lab files (CSV, XLSX) into the accepted-results table, rejecting what cannot be used.

:func:`load_results` reads each file, finds its header row, recognises its columns
(:mod:`tracescreen.columns`), parses every cell (:mod:`tracescreen.parsing`), converts units to
µg/L (:mod:`tracescreen.units`) and matches analyte names (:mod:`tracescreen.analytes`).

Nothing is lost: every data row of every file ends up in ``accepted`` or in ``rejected`` with its
reason, and ``rows read = accepted + rejected`` holds per file. Rows whose every cell is empty are
not data rows; they are counted in ``files.blank_rows``.

Problems with a whole file (missing, unreadable, not UTF-8, no recognisable columns) raise
:class:`LoadError` with a one-line message naming the file.
"""

from __future__ import annotations

import csv
import datetime as dt
import hashlib
import io
import re
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
from pandas.api.types import union_categoricals

from tracescreen.io import analytes
from tracescreen.io import cells as parsing
from tracescreen.io import chemistry_rows, hardness_rows, parameter_codes, units
from tracescreen._internal.coded import CodedText, derived_categorical, joint_codes
from tracescreen.io.columns import CANONICAL, REQUIRED, ColumnMap, recognise_columns, score_header_row
from tracescreen._internal.memory import release_unused

HEADER_SEARCH_ROWS = 30

ACCEPTED_COLUMNS = [
    "file", "sheet", "row", "site_id", "sample_id", "sampled_at", "analyte", "fraction",
    "result_text", "unit", "value_ug_L", "detected", "detection_limit_ug_L", "qualifier",
    "sample_type", "parent_sample_id", "lab", "batch", "analysed_at", "hardness_mg_L",
    "uncertainty_ug_L", "qualifier_meaning", "ph", "doc_mg_L", "temperature_C",
]
#: Water-chemistry inputs of computed limits (io/chemistry_rows.py), NaN when not reported.
INPUT_COLUMNS = ("ph", "doc_mg_L", "temperature_C")


#: Text columns of the accepted table (held as pandas categoricals of str).
TEXT_COLUMNS = ("file", "sheet", "site_id", "sample_id", "analyte", "fraction", "result_text", "unit",
                "qualifier", "sample_type", "parent_sample_id", "lab", "batch", "qualifier_meaning")


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


@dataclass
class LoadResult:
    """Accepted rows, rows set aside (not results for screening), rejected rows with reasons, and
    one line per file read. Rows read = accepted + set aside + rejected."""

    accepted: pd.DataFrame
    rejected: pd.DataFrame
    files: pd.DataFrame
    warnings: list[str] = field(default_factory=list)
    set_aside: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=["file", "sheet", "row", "reason"]))


#: Reasons of rows set aside start with this (they are stored with the rejected rows of a
#: workspace, so that its counts stay rows read = stored + rejected, and told apart by it).
SET_ASIDE_PREFIX = "not screened: "


def split_set_aside(rows: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(rejected, set aside) rows of a table of rows not accepted, told apart by their reason; the
    reasons of the rows set aside are returned without :data:`SET_ASIDE_PREFIX`."""
    aside = rows["reason"].astype(str).str.startswith(SET_ASIDE_PREFIX).to_numpy(dtype=bool) if len(rows) else \
        np.zeros(0, dtype=bool)
    out = rows[aside].reset_index(drop=True)
    out["reason"] = out["reason"].astype(str).str.removeprefix(SET_ASIDE_PREFIX)
    return rows[~aside].reset_index(drop=True), out


# --------------------------------------------------------------------------------------------
# reading files as text
# --------------------------------------------------------------------------------------------

def sha256_of(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


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
    """LoadError naming the required columns a header row lacks (mapped defaults and parameter
    codes count)."""
    found = recognise_columns(headers, opts.column_map)
    if "parameter_code" in found:
        found = {**found, "analyte": "", "unit": ""}
    if {"site_id", "sampled_at"} <= set(found):
        found = {**found, "sample_id": ""}  # identified by site and time (see normalise)
    defaults = opts.column_map.defaults if opts.column_map and mapping_applies(headers, opts.column_map) else {}
    missing = [c for c in REQUIRED if c not in found and c not in defaults]
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

def mapping_applies(headers, column_map: ColumnMap) -> bool:
    """A mapping's ``defaults`` apply only to files that have at least one of its mapped headers."""
    from tracescreen.io.columns import header_key

    mapped = {header_key(h) for h in column_map.columns}
    return not mapped or any(header_key(h) in mapped for h in headers)


def _add(reasons: np.ndarray, mask: np.ndarray, msg) -> None:
    """Append ``msg`` (text or array aligned with mask's True cells) to the reasons of ``mask``."""
    if not mask.any():
        return
    cur = reasons[mask]
    m = np.asarray(msg, dtype=object) if not isinstance(msg, str) else msg
    joined = np.where(cur == "", "", cur + "; ")
    reasons[mask] = joined + m


def _chemistry_inputs(analyte_text, fraction, aside, parsed, combo, unit_text, v_unit_plain, v_factor,
                      site, sample) -> dict[str, np.ndarray]:
    """pH, DOC and temperature rows: set aside with their reason, their values spread to the sample's
    rows (io/chemistry_rows.py). Returns column -> value per row."""
    n = len(fraction)
    kind = chemistry_rows.input_kind(analyte_text.series(), np.zeros(len(analyte_text.values), dtype=bool))
    kind = analyte_text.rows(kind.astype(object))
    when_dissolved = analyte_text.rows(chemistry_rows.input_kind(
        analyte_text.series(), np.ones(len(analyte_text.values), dtype=bool)).astype(object))
    kind = np.where((kind == "") & (when_dissolved == "doc") & (fraction == 2), "doc", kind)
    is_input = kind != ""
    if not is_input.any():
        return {c: np.full(n, np.nan) for c in INPUT_COLUMNS}
    words = np.array([chemistry_rows.WORDS.get(k, "") for k in kind], dtype=object)
    other = np.array([re.sub(r"analyte '.*?' is not in the analyte registry \(not screened by tracescreen\)(; )?", "", a)
                      for a in aside[is_input]], dtype=object)  # other reasons (e.g. a rejected result) stay
    aside[is_input] = words[is_input] + " result: used as an input of the sample's computed limits" + \
        np.where(other == "", "", "; " + other)
    ok = is_input & parsed["detected"][combo] & pd.isna(parsed["error"][combo]).astype(bool)
    ok[is_input] &= other == ""
    vals = chemistry_rows.input_values(kind, np.where(ok, parsed["value"][combo], np.nan),
                                       np.asarray(v_unit_plain, dtype=object)[unit_text.codes],
                                       v_factor[unit_text.codes])
    sample_code, _ = joint_codes(site.codes, sample.codes)
    return chemistry_rows.inputs_of_samples(sample_code, np.where(ok, kind, ""), vals)


def _joined(a: CodedText, b: CodedText, join) -> CodedText:
    """Two text columns joined into one by ``join`` (called once per distinct pair)."""
    pair, first = joint_codes(a.codes, b.codes)
    text = join(pd.Series(a.values.take(a.codes[first]), dtype=object),
                pd.Series(b.values.take(b.codes[first]), dtype=object))
    return CodedText.from_series(pd.Series(text.to_numpy(dtype=object)[pair], dtype=object))


def _vocab_equals(col: CodedText, word: str) -> np.ndarray:
    """Per distinct value: does the text equal ``word`` (case and spaces ignored)?"""
    return np.asarray(pd.Series(col.values, dtype=object).astype(str).str.strip().str.lower() == word, dtype=bool)


def _quoted(col: CodedText, mask: np.ndarray, before: str, after: str) -> np.ndarray:
    """Messages ``before'text'after`` for the rows in ``mask`` (built only for those rows)."""
    return before + "'" + col.text_at(mask) + "'" + after


_FRACTIONS = np.array(["", "total", "dissolved"], dtype=object)  # fraction codes 0, 1, 2
_NAME_FRACTION_CODE = {"total": 1, "dissolved": 2, "conflict": 3}


def _fraction_codes(per_value) -> np.ndarray:
    return np.array([_NAME_FRACTION_CODE.get(v, 0) if isinstance(v, str) else 0 for v in per_value], dtype=np.int8)


def normalise(raw: RawTable, options: LoadOptions | None = None,
              site_ids: set[str] | None = None, sites_name: str = "sites file"
              ) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Turn one raw table into accepted rows (contract columns) and rejected rows (with reasons).

    Each text column is coded once (:class:`tracescreen._internal.coded.CodedText`) and every parser runs on
    distinct values (or distinct combinations of result, qualifier, detection limit, uncertainty
    and unit), never per row; rows take the answers by integer indexing.
    """
    opts = options or LoadOptions()
    cells = raw.cells
    n = len(cells)
    found = recognise_columns(list(cells.columns), opts.column_map)
    cells, found = parameter_codes.fill_from_codes(cells, found)  # NWIS parm_cd / WQX USGSPCode
    defaults = opts.column_map.defaults if opts.column_map and mapping_applies(cells.columns, opts.column_map) else {}
    where = f"{raw.file}" + (f" [{raw.sheet}]" if raw.sheet else "")
    no_sample_id = "sample_id" not in found and "sample_id" not in defaults
    if no_sample_id and {"site_id", "sampled_at"} <= set(found):  # NWIS: a sample is a site and a time
        found = {**found, "sample_id": found["site_id"]}
        raw.notes.append(f"{where}: no sample id column: each sample is identified by its site and "
                         "sampling date and time")
    missing = [c for c in REQUIRED if c not in found and c not in defaults]
    if missing:
        raise LoadError(
            f"{where}: required column(s) {', '.join(missing)} not found (headers: "
            f"{', '.join(map(str, cells.columns[:12]))}); give a column mapping with --columns"
        )
    if n == 0:  # a header without data rows: nothing accepted, nothing rejected
        return normalise_empty(), pd.DataFrame(columns=["file", "sheet", "row", "reason", *cells.columns])

    def col(c: str) -> CodedText:
        if c in found:
            return CodedText.from_series(cells[found[c]])
        return CodedText.constant(defaults.get(c, ""), n)

    reasons = np.full(n, "", dtype=object)
    if "__field_count_error__" in cells.columns:
        fc = cells["__field_count_error__"].to_numpy(dtype=object)
        _add(reasons, fc != "", fc[fc != ""])

    site, sample = col("site_id"), col("sample_id")
    if no_sample_id:
        sample = _joined(site, _joined(col("sampled_at"), col("sampled_time"), parsing.join_date_time),
                         lambda a, b: a + " " + b)
    _add(reasons, site.equals(""), "site_id is empty")
    _add(reasons, sample.equals(""), "sample_id is empty")
    if site_ids is not None:
        unknown_site = site.rows(~site.values.isin(site_ids) & (site.values != ""))
        _add(reasons, unknown_site, _quoted(site, unknown_site, "site ", f" is not in {sites_name}"))

    sampled_text = col("sampled_at")
    if "sampled_time" in found:  # a date column and a time column (WQX, NWIS): one date-time
        sampled_text = _joined(sampled_text, col("sampled_time"), parsing.join_date_time)
    dates, bad = parsing.parse_dates(sampled_text.series(), opts.date_order)
    sampled_at, bad_date = sampled_text.rows(dates), sampled_text.rows(bad)
    _add(reasons, sampled_text.equals(""), "sampled_at is empty")
    hint = "" if opts.date_order != "iso" else " (ISO 8601 expected, e.g. 2021-03-04; use --date-order dmy or mdy for other forms)"
    _add(reasons, bad_date, _quoted(sampled_text, bad_date, "sampled_at ", " is not a date" + hint))
    future = sampled_text.rows(dates > np.datetime64(pd.Timestamp.now().normalize() + pd.Timedelta(days=1)))
    _add(reasons, future, "sampled_at is in the future")

    analyte_text = col("analyte")
    names, name_fraction = analytes.match_analytes(analyte_text.series())
    v_no_name = pd.isna(names).astype(bool)
    no_name = analyte_text.rows(v_no_name)
    name_code = analyte_text.rows(_fraction_codes(name_fraction))
    conflict_name = name_code == 3
    _add(reasons, no_name & analyte_text.equals(""), "analyte is empty")
    is_hardness = analyte_text.rows(hardness_rows.is_hardness_name(analyte_text.series()))
    unk = analyte_text.rows(v_no_name & (analyte_text.values != "")) & ~conflict_name & ~is_hardness
    aside = np.full(n, "", dtype=object)  # rows that are not results to screen (set aside, not rejected)
    _add(aside, unk, _quoted(analyte_text, unk, "analyte ", " is not in the analyte registry (not screened by tracescreen)"))
    _add(aside, is_hardness, "hardness result: used as the hardness of the sample's metal results")
    _add(reasons, conflict_name, "analyte name names both total and dissolved")

    frac_text = col("fraction")
    v_fraction, v_bad_frac = parsing.parse_vocabulary(frac_text.series(), parsing.FRACTION_VOCAB)
    bad_frac = frac_text.rows(v_bad_frac)
    _add(reasons, bad_frac, _quoted(frac_text, bad_frac, "fraction ", " is not total or dissolved"))
    given = frac_text.rows(_fraction_codes(v_fraction))
    from_name = np.where(conflict_name, 0, name_code)
    _add(reasons, (given > 0) & (from_name > 0) & (given != from_name), "fraction column and analyte name disagree")
    fraction = np.where(given == 0, from_name, given)
    if opts.default_fraction:
        fraction = np.where(fraction == 0, _NAME_FRACTION_CODE[opts.default_fraction], fraction)
    _add(reasons, (fraction == 0) & ~bad_frac & ~conflict_name,
         "fraction not given (no fraction column value, none in the analyte name; use --default-fraction to set one)")

    unit_text = col("unit")
    v_unit_plain, v_species = units.split_species(unit_text.series())  # "ug/L as Cr" -> ug/L, Cr
    v_factor = units.factors_for(v_unit_plain)
    bad_unit = unit_text.rows(np.isnan(v_factor))
    _add(reasons, bad_unit & unit_text.equals(""), "unit is empty")
    bu = bad_unit & ~unit_text.equals("")
    _add(reasons, bu, _quoted(unit_text, bu, "unit ", " is not a concentration unit tracescreen knows"))
    species = unit_text.rows(v_species.to_numpy(dtype=object))
    symbol = analyte_text.rows(np.asarray(pd.Series(names, dtype=object).map(analytes.symbol_of()).fillna(""),
                                          dtype=object))
    wrong_sp = (species != "") & ~is_hardness & ~v_no_name[analyte_text.codes] & \
        (pd.Series(species, dtype=object).str.lower().to_numpy() != pd.Series(symbol, dtype=object).str.lower().to_numpy())
    _add(reasons, wrong_sp, _quoted(unit_text, wrong_sp, "unit ", " states a species other than the element "
                                                                  "(a molar-mass conversion is not guessed)"))

    # a result, its qualifier, detection limit, uncertainty and unit: parsed once per combination
    qualifier, res_text, dl_text, unc_text = col("qualifier"), col("result"), col("detection_limit"), col("uncertainty")
    remark, condition = col("remark_code"), col("detection_condition")
    combo, first = joint_codes(res_text.codes, qualifier.codes, dl_text.codes, unc_text.codes, unit_text.codes,
                               remark.codes, condition.codes)

    def at_first(c: CodedText) -> pd.Series:
        return pd.Series(c.values.take(c.codes[first]), dtype="str")

    parsed = parsing.parse_results(at_first(res_text), at_first(qualifier), at_first(dl_text), opts.decimal_comma,
                                   remark=at_first(remark) if "remark_code" in found else None,
                                   condition=at_first(condition) if "detection_condition" in found else None)
    pa_side = parsed["set_aside"]
    has_aside = ~pd.isna(pa_side).astype(bool)
    _add(aside, has_aside[combo], pa_side[combo[has_aside[combo]]])
    status_text = col("result_status")
    st_rej = status_text.rows(_vocab_equals(status_text, "rejected"))
    _add(aside, st_rej, "result status 'Rejected' (unusable)")
    perr = parsed["error"]
    has_err = ~pd.isna(perr).astype(bool)
    _add(reasons, has_err[combo], perr[combo[has_err[combo]]])

    st_text = col("sample_type")
    v_sample_type, v_bad_st = parsing.parse_vocabulary(st_text.series(), parsing.SAMPLE_TYPE_VOCAB)
    st_kind = pd.Series(v_sample_type, dtype=object).fillna("").astype(str)
    st_aside = st_text.rows(st_kind.str.startswith("set_aside:").to_numpy(dtype=bool))
    if st_aside.any():
        kinds = st_text.rows(st_kind.str.removeprefix("set_aside:").map(
            lambda k: parsing.SET_ASIDE_KINDS.get(k, k)).to_numpy(dtype=object))
        _add(aside, st_aside, kinds[st_aside] + " (sample type '" + st_text.text_at(st_aside) + "')")
    v_sample_type = np.where(st_kind.str.startswith("set_aside:").to_numpy(dtype=bool), "sample", v_sample_type)
    bad_st = st_text.rows(v_bad_st)
    _add(reasons, bad_st, _quoted(st_text, bad_st, "sample_type ", " is not sample, field_duplicate, "
                                                                   "field_blank or lab_blank"))
    parent = col("parent_sample_id")
    dup_no_parent = st_text.rows(v_sample_type == "field_duplicate") & parent.equals("")
    _add(reasons, dup_no_parent, "field duplicate without parent_sample_id")

    an_text = col("analysed_at")
    an_dates, an_bad = parsing.parse_dates(an_text.series(), opts.date_order)
    bad_an = an_text.rows(an_bad)
    _add(reasons, bad_an, _quoted(an_text, bad_an, "analysed_at ", " is not a date"))

    hard_text = col("hardness_mg_L")
    v_hardness = parsing.to_number(hard_text.series(), opts.decimal_comma).to_numpy()
    bad_h = hard_text.rows(((hard_text.values != "") & np.isnan(v_hardness)) | (v_hardness < 0))
    _add(reasons, bad_h, _quoted(hard_text, bad_h, "hardness ", " is not a non-negative number"))
    row_hardness = hard_text.rows(v_hardness)
    if is_hardness.any():  # hardness result rows [mg/L as CaCO3] -> hardness of the same sample
        ok_h = is_hardness & parsed["detected"][combo] & pd.isna(parsed["error"][combo]).astype(bool) \
            & ~np.isnan(v_factor[unit_text.codes]) & np.isin(species, ["", "CaCO3", "caco3"])
        h_mg_L = parsed["value"][combo] * v_factor[unit_text.codes] / 1000.0
        sample_code, _ = joint_codes(site.codes, sample.codes)
        from_rows = hardness_rows.hardness_of_samples(sample_code, ok_h, h_mg_L)
        row_hardness = np.where(np.isnan(row_hardness), from_rows, row_hardness)

    chem = _chemistry_inputs(analyte_text, fraction, aside, parsed, combo, unit_text, v_unit_plain, v_factor,
                             site, sample)

    unc, v_bad_unc = parsing.parse_uncertainty(at_first(unc_text), parsed["value"], opts.decimal_comma)
    bad_unc = v_bad_unc[combo]
    _add(reasons, bad_unc, _quoted(unc_text, bad_unc, "uncertainty ", " is not a number or a percentage"))

    aside_mask = aside != ""
    reasons = np.where(aside_mask, SET_ASIDE_PREFIX + aside.astype(str), reasons).astype(object)
    rejected_mask = reasons != ""
    ok = ~rejected_mask
    okc = combo[ok]
    factor = v_factor[unit_text.codes[first]]  # per combination
    n_ok = int(ok.sum())
    acc = pd.DataFrame({
        "file": pd.Categorical.from_codes(np.zeros(n_ok, dtype=np.int8), categories=pd.Index([raw.file], dtype="str")),
        "sheet": pd.Categorical.from_codes(np.zeros(n_ok, dtype=np.int8), categories=pd.Index([raw.sheet], dtype="str")),
        "row": raw.rows[ok],
        "site_id": site.categorical(ok),
        "sample_id": sample.categorical(ok),
        "sampled_at": sampled_at[ok],
        "analyte": derived_categorical(np.where(v_no_name, "", names), analyte_text.codes, ok),
        "fraction": derived_categorical(_FRACTIONS, fraction, ok),
        "result_text": res_text.categorical(ok),
        "unit": unit_text.categorical(ok),
        "value_ug_L": units.clean_decimal(parsed["value"] * factor)[okc],
        "detected": parsed["detected"][okc],
        "detection_limit_ug_L": units.clean_decimal(parsed["detection_limit"] * factor)[okc],
        "qualifier": qualifier.categorical(ok),
        "sample_type": derived_categorical(np.where(pd.isna(v_sample_type).astype(bool), "sample", v_sample_type),
                                           st_text.codes, ok),
        "parent_sample_id": parent.categorical(ok),
        "lab": col("lab").categorical(ok),
        "batch": col("batch").categorical(ok),
        "analysed_at": an_text.rows(an_dates)[ok],
        "hardness_mg_L": row_hardness[ok],
        "uncertainty_ug_L": units.clean_decimal(unc * factor)[okc],
        "qualifier_meaning": pd.Categorical(parsed["meaning"][okc].astype(str)),
        **{c: chem[c][ok] for c in INPUT_COLUMNS},
    })
    rej_cells = cells.loc[rejected_mask]
    rej_cells = rej_cells.drop(columns=[c for c in rej_cells.columns if str(c).startswith("__")])
    rej = pd.concat([
        pd.DataFrame({"file": raw.file, "sheet": raw.sheet, "row": raw.rows[rejected_mask],
                      "reason": reasons[rejected_mask].astype(str)}),
        rej_cells.reset_index(drop=True),
    ], axis=1)
    return acc, rej


def empty_accepted() -> pd.DataFrame:
    """An accepted-results table with no rows and the contract's columns and types."""
    return normalise_empty()


def normalise_empty() -> pd.DataFrame:
    no_text = pd.Categorical([], categories=pd.Index([], dtype="str"))
    cols = {c: pd.Series(no_text) if c in TEXT_COLUMNS else pd.Series(dtype=str)
            for c in ACCEPTED_COLUMNS}
    for c in ("value_ug_L", "detection_limit_ug_L", "hardness_mg_L", "uncertainty_ug_L") + INPUT_COLUMNS:
        cols[c] = pd.Series(dtype=float)
    cols["row"] = pd.Series(dtype="int64")
    cols["detected"] = pd.Series(dtype=bool)
    cols["sampled_at"] = pd.Series(dtype="datetime64[ns]")
    cols["analysed_at"] = pd.Series(dtype="datetime64[ns]")
    return pd.DataFrame(cols)


def concat_accepted(frames: list[pd.DataFrame]) -> pd.DataFrame:
    """Concatenate accepted tables, keeping text columns categorical (union of sorted categories)."""
    if len(frames) == 1:
        return frames[0]
    text = [c for c in frames[0].columns if c in TEXT_COLUMNS]
    out = pd.concat([f.drop(columns=text) for f in frames], ignore_index=True)
    for c in text:  # categories are unions of the files' categories (codes are recoded, not text)
        cats = [pd.Categorical(f[c]) for f in frames]
        cats = [x.set_categories(x.categories.astype("str")) for x in cats]  # one categories dtype
        out[c] = union_categoricals(cats, sort_categories=True)
    return out[frames[0].columns]


def load_results(paths, options: LoadOptions | None = None, sites: pd.DataFrame | None = None,
                 sites_name: str = "the sites file") -> LoadResult:
    """Load lab files into accepted and rejected rows.

    Parameters
    ----------
    paths : iterable of str or Path
        CSV or XLSX files.
    options : LoadOptions
        Column mapping, date order, decimal comma, encoding, default fraction, sheet.
    sites : DataFrame, optional
        The sites table; when given, a result whose site is not in it is rejected.

    Returns
    -------
    LoadResult
    """
    opts = options or LoadOptions()
    site_ids = set(sites["site_id"]) if sites is not None else None
    accepted, rejected, files, warnings = [], [], [], []
    for path in paths:
        raws, digest = read_raw(path, opts)
        for raw in raws:
            acc, rej = normalise(raw, opts, site_ids, sites_name)
            warnings.extend(raw.notes)
            accepted.append(acc)
            rejected.append(rej)
            files.append({"file": raw.file, "path": raw.path, "sheet": raw.sheet, "sha256": digest,
                          "header_row": raw.header_row, "rows_read": len(raw.cells),
                          "accepted": len(acc), "set_aside": int(rej["reason"].astype(str)
                                                                 .str.startswith(SET_ASIDE_PREFIX).sum()),
                          "rejected": int((~rej["reason"].astype(str).str.startswith(SET_ASIDE_PREFIX)).sum()),
                          "blank_rows": raw.blank_rows})
    acc = concat_accepted(accepted) if accepted else normalise_empty()
    rej = pd.concat(rejected, ignore_index=True) if rejected else pd.DataFrame(columns=["file", "sheet", "row", "reason"])
    rej, aside = split_set_aside(rej)
    release_unused()  # the files' text is gone; give its memory back before screening allocates
    return LoadResult(acc, rej, pd.DataFrame(files), warnings, aside)
