"""Server-side table logic: the exceedance rows, DataTable filter/sort/paging, downloads."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from dashboard.state.session import SessionData
from tracescreen import vocabulary

#: rows that need attention: above a limit, or undecided (detection limit too high, or above the
#: calibrated range at or below the limit)
ATTENTION_STATUSES = vocabulary.ATTENTION
EXCEEDANCE_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit",
    "value_ug_L", "detection_limit_ug_L", "limit_table", "use", "duration", "limit_ug_L",
    "ratio", "status", "source", "note",
]
#: long text columns shown on one line, cut with an ellipsis; the full text is in the tooltip
LONG_TEXT_COLUMNS = ("source", "note", "detail", "suggested_action")
NUMERIC_COLUMNS = {"value_ug_L", "detection_limit_ug_L", "limit_ug_L", "ratio", "hardness_used_mg_L"}


def exceedance_rows(session: SessionData) -> pd.DataFrame:
    """Every site-sample screening row that exceeds or is undecided, engine columns, by site/date."""

    def compute():
        scr = session.screened
        mask = scr["status"].isin(ATTENTION_STATUSES).to_numpy()
        if "sample_type" in scr.columns:
            mask = mask & (scr["sample_type"] == "sample").to_numpy(dtype=bool)  # on the codes
        cols = [c for c in EXCEEDANCE_COLUMNS if c in scr.columns]
        return scr.loc[mask, cols].reset_index(drop=True)

    return session.derived("exceedance_rows", compute)


# ---- DataTable "custom" filtering ----------------------------------------------------------------
_OPERATORS = {
    "eq": "=", "=": "=", "ne": "!=", "!=": "!=", "lt": "<", "<": "<", "le": "<=", "<=": "<=",
    "gt": ">", ">": ">", "ge": ">=", ">=": ">=", "contains": "contains", "icontains": "contains",
    "scontains": "scontains", "datestartswith": "datestartswith",
}
_TERM = re.compile(
    r"^\{(?P<col>[^}]+)\}\s+(?P<op>s?i?contains|datestartswith|eq|ne|lt|le|gt|ge|!=|<=|>=|=|<|>)\s+"
    r"(?P<val>.+)$"
)
_BLANK = re.compile(r"^\{(?P<col>[^}]+)\}\s+is (?P<neg>not )?blank$")


class FilterError(ValueError):
    """A filter expression the table cannot apply (shown to the user)."""


def _unquote(v: str) -> str:
    v = v.strip()
    if len(v) >= 2 and v[0] == v[-1] and v[0] in "\"'`":
        return v[1:-1].replace("\\" + v[0], v[0])
    return v


def filter_mask(df: pd.DataFrame, query: str | None) -> np.ndarray:
    """Rows matching a DataTable ``filter_query`` (terms joined by ``&&``).

    Supports the operators the table's filter row writes: ``contains``, ``=``, ``!=``, ``<``,
    ``<=``, ``>``, ``>=`` (also spelt ``eq``, ``ne``, ...), ``datestartswith``, ``is blank``.
    Numeric columns compare as numbers, text columns case-insensitively.
    """
    mask = np.ones(len(df), dtype=bool)
    if not query:
        return mask
    for term in query.split(" && "):
        term = term.strip()
        if not term:
            continue
        blank = _BLANK.match(term)
        m = _TERM.match(term)
        if blank:
            col = blank.group("col")
            if col not in df:
                raise FilterError(f"unknown column {col!r}")
            isblank = df[col].isna().to_numpy() | (df[col].astype(str).to_numpy() == "")
            mask &= ~isblank if blank.group("neg") else isblank
            continue
        if not m:
            raise FilterError(f"cannot read the filter {term!r}")
        col, op, val = m.group("col"), _OPERATORS[m.group("op")], _unquote(m.group("val"))
        if col not in df:
            raise FilterError(f"unknown column {col!r}")
        series = df[col]
        if op in ("contains", "scontains"):
            text = series.astype(str)
            mask &= text.str.contains(val, case=(op == "scontains"), regex=False).fillna(False).to_numpy()
        elif op == "datestartswith":
            mask &= series.astype(str).str.startswith(val).fillna(False).to_numpy()
        elif col in NUMERIC_COLUMNS or pd.api.types.is_numeric_dtype(series.dtype):
            try:
                num = float(val)
            except ValueError as exc:
                raise FilterError(f"{col} needs a number, not {val!r}") from exc
            mask &= _compare(series.to_numpy(float), op, num)
        elif pd.api.types.is_datetime64_any_dtype(series.dtype):
            try:
                when = pd.Timestamp(val)
            except ValueError as exc:
                raise FilterError(f"{col} needs a date, not {val!r}") from exc
            mask &= _compare(series.to_numpy(), op, when.to_datetime64())
        else:
            text = series.astype(str).str.lower().to_numpy(dtype=object)
            mask &= _compare(text, op, val.lower())
    return mask


def _compare(values: np.ndarray, op: str, other) -> np.ndarray:
    with np.errstate(invalid="ignore"):
        result = {
            "=": values == other, "!=": values != other, "<": values < other,
            "<=": values <= other, ">": values > other, ">=": values >= other,
        }[op]
    return np.asarray(result, dtype=bool)


def query_table(df: pd.DataFrame, filter_query: str | None, sort_by: list | None) -> pd.DataFrame:
    """Filter and sort a frame the way a DataTable in ``custom`` mode asks."""
    out = df[filter_mask(df, filter_query)]
    if sort_by:
        cols = [s["column_id"] for s in sort_by if s.get("column_id") in out.columns]
        asc = [s.get("direction", "asc") == "asc" for s in sort_by if s.get("column_id") in out.columns]
        if cols:
            keyed = out.copy()
            for c in cols:  # categories sort by their text
                if isinstance(keyed[c].dtype, pd.CategoricalDtype):
                    keyed[c] = keyed[c].astype(str)
            out = out.loc[keyed.sort_values(cols, ascending=asc, kind="stable").index]
    return out


def display_records(df: pd.DataFrame) -> list[dict]:
    """Rows as JSON-ready dicts: dates as ISO text, numbers rounded to 6 significant digits."""
    out = pd.DataFrame(index=df.index)
    for c in df.columns:
        s = df[c]
        if pd.api.types.is_datetime64_any_dtype(s.dtype):
            out[c] = s.dt.strftime("%Y-%m-%d").where(s.notna(), "")
        elif pd.api.types.is_numeric_dtype(s.dtype) and not pd.api.types.is_bool_dtype(s.dtype):
            vals = s.to_numpy(float)
            out[c] = [None if not np.isfinite(v) else float(f"{v:.6g}") for v in vals]
        else:
            out[c] = s.astype(object).where(s.notna(), "").astype(str)
    return out.to_dict("records")


def page_records(df: pd.DataFrame, page_current: int | None, page_size: int) -> list[dict]:
    """One page of rows for the table."""
    start = int(page_current or 0) * page_size
    return display_records(df.iloc[start:start + page_size])


# ---- downloads -------------------------------------------------------------------------------------
def _written(writer, df, suffix: str, *args) -> bytes:
    import tempfile
    from pathlib import Path

    from dashboard.state.frames import plain_frame

    with tempfile.TemporaryDirectory(prefix="tracescreen-download-") as tmp:
        path = Path(tmp) / f"table{suffix}"
        if args:
            writer({args[0]: plain_frame(df)}, path)
        else:
            writer(plain_frame(df), path)
        return path.read_bytes()


def to_csv_bytes(df: pd.DataFrame) -> bytes:
    """The rows as the engine writes CSV (ISO dates, formula-safe text; ``tracescreen.outputs``)."""
    from tracescreen.report.writers import write_csv

    return _written(write_csv, df, ".csv")


def to_xlsx_bytes(df: pd.DataFrame, sheet: str = "exceedances") -> bytes:
    """The rows as the engine writes XLSX (one sheet; ``tracescreen.outputs``)."""
    from tracescreen.report.writers import write_xlsx

    return _written(write_xlsx, df, ".xlsx", sheet)


def table_page(frame: pd.DataFrame, page_current, page_size: int, sort_by, filter_query):
    """One page of a server-side table: records, page count, "n of N rows" text, error text and
    the tooltips holding the full text of long cells."""
    try:
        rows, error = query_table(frame, filter_query, sort_by), ""
    except FilterError as exc:
        rows, error = frame.iloc[0:0], f"Filter not applied: {exc}"
    n_pages = max(1, -(-len(rows) // page_size))
    records = page_records(rows, page_current, page_size)
    tooltips = [{c: {"value": str(r[c]), "type": "text"} for c in LONG_TEXT_COLUMNS if r.get(c)}
                for r in records]
    return records, n_pages, f"{len(rows):,} of {len(frame):,} rows", error, tooltips
