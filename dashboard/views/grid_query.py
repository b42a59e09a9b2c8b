"""Server-side rows of a grid: AG Grid's filter and sort models applied to a frame, one block at a time.

The tables of the dashboard are AG Grid grids in the *infinite* row model (the server-side row model
of AG Grid is an Enterprise feature; the infinite model of the Community edition asks the server for
each block of rows with the grid's filter and sort models, which is what is needed here). The grid
sends ``getRowsRequest = {startRow, endRow, filterModel, sortModel}``; :func:`query_rows` applies the
models to the whole frame (vectorised; text matched on the categories of a categorical column, not
on a million strings) and :func:`block_records` turns the requested block into JSON records.

Filter models (AG Grid's documented shapes, checked against ag-grid-community 35):

* text ``{"filterType": "text", "type": "contains", "filter": "KR0"}`` with types ``contains,
  notContains, equals, notEqual, startsWith, endsWith, blank, notBlank``; case-insensitive;
* number ``{"filterType": "number", "type": "greaterThan", "filter": 2, "filterTo": None}`` with
  ``equals, notEqual, lessThan, lessThanOrEqual, greaterThan, greaterThanOrEqual, inRange, blank,
  notBlank`` (``inRange`` includes both ends, as the grid is told with ``inRangeInclusive``);
* date ``{"filterType": "date", "type": "lessThan", "dateFrom": "2021-01-01 00:00:00", "dateTo": None}``
  with the number types, compared by calendar day;
* two conditions ``{"filterType": ..., "operator": "AND" | "OR", "conditions": [model, model]}``.

A column shown in words (a status shown as "Above limit") is matched on the words on screen and on
its code, so a filter typed from what the table shows always works. A model the server cannot apply
raises :class:`FilterError` with a message in words; the grid then shows no rows and the message,
and downloads refuse (never "every row" after a failed filter).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Callable

import numpy as np
import pandas as pd


class FilterError(ValueError):
    """A filter the table cannot apply (the message is shown to the user)."""


@dataclass(frozen=True)
class GridQuery:
    """The filter and sort models of one grid, hashable (kept per session by its JSON text)."""

    filter_json: str = "{}"
    sort_json: str = "[]"

    @classmethod
    def from_models(cls, filter_model: dict | None, sort_model: list | None) -> "GridQuery":
        """From the grid's models (``None`` for none)."""
        return cls(json.dumps(filter_model or {}, sort_keys=True), json.dumps(sort_model or [], sort_keys=True))

    @property
    def filter_model(self) -> dict:
        """The filter model as a dict."""
        return json.loads(self.filter_json)

    @property
    def sort_model(self) -> list:
        """The sort model as a list of ``{"colId", "sort"}``."""
        return json.loads(self.sort_json)


@dataclass(frozen=True)
class Display:
    """How a column's values are shown, when not as stored: ``words`` maps a stored value to its words."""

    words: dict = field(default_factory=dict)


_NUMBER_OPS = {
    "equals": np.equal, "notEqual": np.not_equal, "lessThan": np.less, "lessThanOrEqual": np.less_equal,
    "greaterThan": np.greater, "greaterThanOrEqual": np.greater_equal,
}


def _text_of_categories(series: pd.Series, display: Display | None) -> tuple[np.ndarray, np.ndarray]:
    """Per-row codes and the lower-case text of each code (the last slot is "" for missing)."""
    if isinstance(series.dtype, pd.CategoricalDtype):
        codes = series.array.codes.astype(np.int64)
        cats = [str(c) for c in series.dtype.categories]
    else:
        cat = pd.Categorical(series.astype(object).where(series.notna(), None))
        codes = cat.codes.astype(np.int64)
        cats = [str(c) for c in cat.categories]
    words = (display.words if display else {})
    shown = [words.get(c, c) for c in cats]
    # a code is matched on its words and on itself ("Above limit" and "exceeds")
    texts = np.array([s.lower() for s in shown] + [""], dtype=object)
    raw = np.array([c.lower() for c in cats] + [""], dtype=object)
    codes = np.where(codes < 0, len(cats), codes)
    return codes, np.stack([texts, raw])


def _text_mask(series: pd.Series, model: dict, display: Display | None) -> np.ndarray:
    kind = model.get("type", "contains")
    codes, texts = _text_of_categories(series, display)
    if kind in ("blank", "empty"):
        return texts[0][codes] == ""
    if kind == "notBlank":
        return texts[0][codes] != ""
    needle = str(model.get("filter") or "").strip().lower()
    if not needle:
        return np.ones(len(series), dtype=bool)
    tests = {
        "contains": lambda t: needle in t, "notContains": lambda t: needle not in t,
        "equals": lambda t: t == needle, "notEqual": lambda t: t != needle,
        "startsWith": lambda t: t.startswith(needle), "endsWith": lambda t: t.endswith(needle),
    }
    if kind not in tests:
        raise FilterError(f"the text filter '{kind}' is not known")
    test = tests[kind]
    per_code = np.array([test(a) for a in texts[0]]) | np.array([test(b) for b in texts[1]])
    if kind in ("notContains", "notEqual"):  # both the words and the code must pass
        per_code = np.array([test(a) for a in texts[0]]) & np.array([test(b) for b in texts[1]])
    return per_code[codes]


def _number(value, what: str) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        raise FilterError(f"{what} needs a number, not {value!r}") from None


def _number_mask(series: pd.Series, model: dict, heading: str) -> np.ndarray:
    kind = model.get("type", "equals")
    values = pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    if kind in ("blank", "empty"):
        return np.isnan(values)
    if kind == "notBlank":
        return ~np.isnan(values)
    if model.get("filter") is None:  # an operator chosen, nothing typed yet
        return np.ones(len(values), dtype=bool)
    x = _number(model.get("filter"), heading)
    with np.errstate(invalid="ignore"):
        if kind == "inRange":
            hi = _number(model.get("filterTo"), heading)
            lo, hi = min(x, hi), max(x, hi)
            return (values >= lo) & (values <= hi)
        if kind not in _NUMBER_OPS:
            raise FilterError(f"the number filter '{kind}' is not known")
        return _NUMBER_OPS[kind](values, x)


def _day(value, heading: str) -> np.datetime64:
    try:
        stamp = pd.Timestamp(str(value)[:10])
    except (TypeError, ValueError):
        raise FilterError(f"{heading} needs a date (YYYY-MM-DD), not {value!r}") from None
    if pd.isna(stamp):
        raise FilterError(f"{heading} needs a date (YYYY-MM-DD), not {value!r}")
    return np.datetime64(stamp.date(), "D")


def _date_mask(series: pd.Series, model: dict, heading: str) -> np.ndarray:
    kind = model.get("type", "equals")
    days = pd.to_datetime(series, errors="coerce").to_numpy().astype("datetime64[D]")
    missing = np.isnat(days)
    if kind in ("blank", "empty"):
        return missing
    if kind == "notBlank":
        return ~missing
    if not model.get("dateFrom"):
        return np.ones(len(days), dtype=bool)
    start = _day(model.get("dateFrom"), heading)
    if kind == "inRange":
        end = _day(model.get("dateTo"), heading)
        start, end = min(start, end), max(start, end)
        return ~missing & (days >= start) & (days <= end)
    if kind not in _NUMBER_OPS:
        raise FilterError(f"the date filter '{kind}' is not known")
    return ~missing & _NUMBER_OPS[kind](days, start)


def column_mask(series: pd.Series, model: dict, heading: str = "", display: Display | None = None) -> np.ndarray:
    """Rows of one column that pass one column's filter model (plain or two conditions)."""
    heading = heading or str(series.name)
    if "conditions" in model:
        masks = [column_mask(series, m, heading, display) for m in model.get("conditions") or []]
        if not masks:
            return np.ones(len(series), dtype=bool)
        combine = np.logical_or if str(model.get("operator", "AND")).upper() == "OR" else np.logical_and
        return combine.reduce(masks)
    kind = model.get("filterType", "text")
    if kind == "number":
        return _number_mask(series, model, heading)
    if kind == "date":
        return _date_mask(series, model, heading)
    if kind == "text":
        return _text_mask(series, model, display)
    raise FilterError(f"the filter kind '{kind}' is not known")


def filter_mask(frame: pd.DataFrame, filter_model: dict | None, headings: dict | None = None,
                displays: dict | None = None) -> np.ndarray:
    """Rows of ``frame`` passing every column's filter (AG Grid ``filterModel``)."""
    mask = np.ones(len(frame), dtype=bool)
    headings, displays = headings or {}, displays or {}
    for col, model in (filter_model or {}).items():
        if col not in frame.columns:
            raise FilterError(f"there is no column '{headings.get(col, col)}' to filter")
        mask &= column_mask(frame[col], model or {}, headings.get(col, col), displays.get(col))
    return mask


def _sort_key(series: pd.Series, display: Display | None) -> np.ndarray:
    """Values that sort as the column is shown: text by its words, case-insensitively; missing last."""
    if isinstance(series.dtype, pd.CategoricalDtype) or series.dtype == object or pd.api.types.is_string_dtype(series.dtype):
        codes, texts = _text_of_categories(series, display)
        order = np.argsort(texts[0], kind="stable")  # the missing slot ("") sorts first ...
        rank = np.empty(len(order), dtype=np.int64)
        rank[order] = np.arange(len(order))
        rank[-1] = len(order)  # ... but missing goes last
        return rank[codes]
    if pd.api.types.is_datetime64_any_dtype(series.dtype):
        v = series.to_numpy().astype("datetime64[ns]").astype(np.int64).astype(float)
        v[np.isnat(series.to_numpy().astype("datetime64[ns]"))] = np.inf
        return v
    if pd.api.types.is_bool_dtype(series.dtype):
        return series.to_numpy(dtype=float)
    v = pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    return np.where(np.isnan(v), np.inf, v)


def sort_order(frame: pd.DataFrame, sort_model: list | None, displays: dict | None = None) -> np.ndarray | None:
    """Row order of an AG Grid ``sortModel`` (``[{"colId", "sort"}]``), stable; ``None`` to keep the order."""
    keys = []
    for item in reversed(sort_model or []):  # np.lexsort: the last key is the primary one
        col = item.get("colId")
        if col not in frame.columns:
            continue
        key = _sort_key(frame[col], (displays or {}).get(col))
        if item.get("sort") == "desc":
            finite = np.isfinite(key) if key.dtype.kind == "f" else np.ones(len(key), dtype=bool)
            key = np.where(finite, -key, np.inf) if key.dtype.kind == "f" else -key
        keys.append(key)
    if not keys:
        return None
    return np.lexsort(keys)


def query_positions(frame: pd.DataFrame, query: GridQuery, headings: dict | None = None,
                    displays: dict | None = None) -> np.ndarray:
    """Positions of the rows passing the query, in the query's order."""
    idx = np.flatnonzero(filter_mask(frame, query.filter_model, headings, displays))
    order = sort_order(frame.iloc[idx] if len(idx) != len(frame) else frame, query.sort_model, displays)
    return idx if order is None else idx[order]


def query_rows(frame: pd.DataFrame, query: GridQuery, headings: dict | None = None,
               displays: dict | None = None) -> pd.DataFrame:
    """The rows of ``frame`` passing the query, in its order (what the grid shows, and what a download holds)."""
    return frame.iloc[query_positions(frame, query, headings, displays)]


def block_records(frame: pd.DataFrame, columns: list[str], displays: dict | None = None,
                  extra: Callable[[pd.DataFrame], dict] | None = None) -> list[dict]:
    """Rows as JSON-ready records: dates as ISO text (with the time when there is one), numbers as
    floats (``None`` for missing; the grid formats them), words for columns shown in words."""
    out: dict[str, list] = {}
    displays = displays or {}
    for c in columns:
        if c not in frame.columns:
            continue
        s = frame[c]
        if pd.api.types.is_datetime64_any_dtype(s.dtype):
            has_time = bool((s.notna() & ((s.dt.hour != 0) | (s.dt.minute != 0))).any())  # a NaT's hour is NaN
            text = s.dt.strftime("%Y-%m-%d %H:%M" if has_time else "%Y-%m-%d")
            out[c] = text.where(s.notna(), "").tolist()
        elif pd.api.types.is_bool_dtype(s.dtype):
            out[c] = [bool(v) for v in s.to_numpy()]
        elif pd.api.types.is_numeric_dtype(s.dtype):
            v = s.to_numpy(dtype=float, na_value=np.nan)
            out[c] = [None if not np.isfinite(x) else float(x) for x in v]
        else:
            words = displays[c].words if c in displays else {}
            vals = s.astype(object).where(s.notna(), "").tolist()
            out[c] = [words.get(str(v), str(v)) for v in vals]
            if c in displays:  # the stored code too, for the cell's colour
                out[c + "_code"] = [str(v) for v in vals]
    if extra is not None:
        out.update(extra(frame))
    n = len(frame)
    return [{k: v[i] for k, v in out.items()} for i in range(n)]
