"""Parsing the cells of a lab file: numbers, dates, fractions, sample types.

Every parser here is vectorised: it works on a whole column (a pandas Series of text) and, where
the column repeats few distinct values (dates, units, vocabularies), on its distinct values only.
Each returns the parsed values and a boolean mask of cells it could not parse, so that the loader
can reject exactly those rows with a reason. Result cells with their qualifiers and limits are
read by :mod:`tracescreen.io.censoring`.

The fraction and sample-type words are data: ``data/fractions.yaml`` (WQX ResultSampleFraction,
NWIS name words, lab codes) and ``data/sample_types.yaml`` (WQX ActivityType, NWIS
sample_type_cd, lab QC codes), each code with its source.
"""

from __future__ import annotations

import functools
import re
from importlib import resources

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from tracescreen._internal.yamlfiles import parse_yaml
from tracescreen.vocabulary import DATE_ORDERS

FRACTION_VOCAB = {
    "total": "total", "t": "total", "tot": "total", "totalrecoverable": "total", "recoverable": "total",
    "unfiltered": "total", "whole": "total", "tr": "total",
    "dissolved": "dissolved", "d": "dissolved", "diss": "dissolved", "filtered": "dissolved",
    "soluble": "dissolved", "f": "dissolved",
}

#: The kinds of sample the tool keeps; ``equipment_blank`` and ``trip_blank`` are judged as field blanks.
KEPT_KINDS = {"sample": "sample", "field_duplicate": "field_duplicate", "field_blank": "field_blank",
              "lab_blank": "lab_blank", "equipment_blank": "field_blank", "trip_blank": "field_blank"}
#: Kinds of ``data/sample_types.yaml`` that are set aside (not results for screening).
SET_ASIDE_KINDS = {"lab_qc": "laboratory QC sample", "reference_material": "reference material",
                   "field_measurement": "field measurement, not a laboratory result"}

SAMPLE_TYPE_VOCAB = {
    "": "sample", "normal": "sample", "regular": "sample", "primary": "sample",
    "routine": "sample", "field sample": "sample", "fieldsample": "sample",
    "fieldduplicate": "field_duplicate", "duplicate": "field_duplicate", "fielddup": "field_duplicate",
    "fieldblank": "field_blank", "equipmentblank": "field_blank", "rinsateblank": "field_blank",
    "labblank": "lab_blank", "laboratoryblank": "lab_blank", "methodblank": "lab_blank",
    # the kinds themselves (what a column mapping translates a lab's words into)
    **{k.replace("_", ""): v for k, v in KEPT_KINDS.items()},
    **{k.replace("_", ""): f"set_aside:{k}" for k in SET_ASIDE_KINDS},
}


def _code_key(code) -> str:
    return re.sub(r"[\s_\-]+", "", str(code).strip().lower())


@functools.cache
def _data(name: str) -> dict:
    return parse_yaml(resources.files("tracescreen").joinpath(f"data/{name}.yaml").read_text("utf-8"),
                      f"{name}.yaml")


def _fractions_from_data() -> tuple[dict[str, str], dict[str, str]]:
    """(fractions, set aside): code -> total | dissolved, and code -> the reason a fraction that is
    neither (suspended, bed sediment ...) is not screened, from ``data/fractions.yaml``."""
    fractions: dict[str, str] = {}
    aside: dict[str, str] = {}
    for section in ("wqx_fraction", "nwis_name_words", "lab_codes"):
        for e in _data("fractions").get(section) or []:
            k = _code_key(e["code"])
            if e.get("fraction") in ("total", "dissolved"):
                fractions.setdefault(k, e["fraction"])
            elif e.get("reason"):
                aside.setdefault(k, str(e["reason"]))
    return fractions, aside


_FRACTIONS, FRACTION_SET_ASIDE = _fractions_from_data()
for _k, _v in _FRACTIONS.items():
    FRACTION_VOCAB.setdefault(_k, _v)


def _sample_types_from_data() -> dict[str, str]:
    """WQX ActivityTypeCode values, NWIS sample_type_cd and lab codes of ``data/sample_types.yaml``:
    normalised code -> canonical sample type, or ``set_aside:<kind>`` for rows not screened."""
    out: dict[str, str] = {}
    for section in ("wqx_activity_type", "lab_codes", "nwis_sample_type"):
        for e in _data("sample_types").get(section) or []:
            kind = e.get("kind")
            target = KEPT_KINDS.get(kind) or (f"set_aside:{kind}" if kind in SET_ASIDE_KINDS else None)
            if target:
                out.setdefault(_code_key(e["code"]), target)
    return out


_DMY_FORMATS = ("%d/%m/%Y", "%d.%m.%Y", "%d-%m-%Y", "%d/%m/%y", "%d.%m.%y")
_MDY_FORMATS = ("%m/%d/%Y", "%m-%d-%Y", "%m/%d/%y")
_TIME_SUFFIXES = ("", " %H:%M", " %H:%M:%S")



def _vocab_key(s: pd.Series) -> pd.Series:
    return s.str.strip().str.lower().str.replace(r"[\s_\-]+", "", regex=True)


_NUM_FULL = r"^\s*[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*$"


def to_number(text: pd.Series, decimal_comma: bool = False) -> pd.Series:
    """Numbers from text; NaN where the text is not a plain number.

    With ``decimal_comma`` a comma is the decimal separator (``0,5``); without it, a comma makes
    the cell unparseable (never guessed). Vectorised in Arrow: a regular-expression test, then a
    cast of the matching cells.
    """
    arr = pa.array(text.fillna("").astype(str), type=pa.string()) if not isinstance(text, pa.Array) else text
    if isinstance(arr, pa.ChunkedArray):
        arr = arr.combine_chunks()
    if decimal_comma:
        arr = pc.replace_substring(arr, ",", ".")
    ok = pc.match_substring_regex(arr, _NUM_FULL)
    vals = pc.cast(pc.utf8_trim_whitespace(pc.if_else(ok, arr, pa.scalar(None, pa.string()))), pa.float64())
    out = vals.to_numpy(zero_copy_only=False).astype(float)
    return pd.Series(np.where(np.isfinite(out), out, np.nan), index=text.index)  # 1e309 is no number


#: A time-zone name or UTC offset after a time (or a date): read, not applied (README "Dates and times").
_ZONE = re.compile(r"(?:(\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?)\s*(?:Z|[+-]\d{2}(?::?\d{2})?"
                   r"|(?:UTC|GMT)(?:\s*[+-]\d{1,2}(?::?\d{2})?)?|[A-Za-z]{1,5})"
                   r"|(\d{4}-\d{2}-\d{2})(?:Z|[+-]\d{2}:\d{2}))$")
#: The dates a lab file can hold: later ones are no sampling date, and past pandas' range of nanoseconds.
LATEST_DATE = pd.Timestamp("2200-01-01")


def _iso_dates(s: pd.Series) -> pd.Series:
    """ISO 8601 parse of distinct texts; NaT where a text does not parse (never an exception)."""
    try:
        out = pd.to_datetime(s, format="ISO8601", errors="coerce")
    except (ValueError, OverflowError):  # e.g. offsets left in some texts: one by one
        out = pd.Series([_one_iso(x) for x in s], index=s.index, dtype="datetime64[us]")
    if getattr(out.dt, "tz", None) is not None:
        out = out.dt.tz_localize(None)
    return out.astype("datetime64[us]")


def _one_iso(text: str):
    try:
        t = pd.Timestamp(text)
    except (ValueError, OverflowError):
        return pd.NaT
    return t.tz_localize(None) if t.tzinfo is not None else t


def _parse_unique_dates(uniques: pd.Index, order: str) -> pd.Series:
    """Parse distinct date strings (microsecond resolution, any year); NaT where no allowed form fits."""
    s = pd.Series(uniques.astype(str), index=uniques).str.strip()
    # a time-zone name or UTC offset after a time ("10:30 EST", "10:30:00-05:00", "10:30Z") is read,
    # not applied: dates are kept in the local clock time the sample was taken in
    s = s.str.replace(_ZONE, r"\1\2", regex=True).str.replace(r"(\d{2}:\d{2}:\d{2}),(\d+)$", r"\1.\2", regex=True)
    iso = _iso_dates(s)
    if order == "iso":
        # ISO 8601 only: YYYY-MM-DD with optional time; reject "2020-13-01" and day-first text
        looks_iso = s.str.match(r"^\d{4}-\d{2}-\d{2}([ T]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?$")
        out = iso.where(looks_iso.to_numpy())
    else:
        formats = _DMY_FORMATS if order == "dmy" else _MDY_FORMATS
        out = iso.where(s.str.match(r"^\d{4}-\d{2}-\d{2}").to_numpy())
        for f in formats:
            for t in _TIME_SUFFIXES:
                missing = out.isna().to_numpy()
                if not missing.any():
                    break
                out[missing] = pd.to_datetime(s[missing], format=f + t, errors="coerce").astype("datetime64[us]")
    return out


def join_date_time(dates: pd.Series, times: pd.Series) -> pd.Series:
    """A date cell and a time cell as one date-time text (per distinct pair, given as Series).

    A date cell that is a spreadsheet date-time at midnight (``2021-03-04 00:00:00``) loses its
    midnight; ``1330`` and ``13:30`` are both 13:30; an empty time leaves the date as it is.

    >>> list(join_date_time(pd.Series(["2021-03-04 00:00:00", "05/23/2024", "2024-05-23"]),
    ...                     pd.Series(["13:30:00", "1330", ""])))
    ['2021-03-04 13:30:00', '05/23/2024 13:30', '2024-05-23']
    """
    d = dates.fillna("").astype(str).str.strip().str.replace(r"[ T]00:00(:00)?$", "", regex=True)
    t = times.fillna("").astype(str).str.strip()
    t = t.str.replace(r"^(\d{1,2})(\d{2})$", r"\1:\2", regex=True)
    return pd.Series(np.where((t != "") & (d != ""), d + " " + t, d), index=dates.index, dtype=object)


def parse_dates(text: pd.Series, order: str = "iso") -> tuple[np.ndarray, np.ndarray]:
    """Parse a date column, once per distinct value (:func:`parse_dates_in_range` with the default range).

    Returns
    -------
    dates : numpy datetime64[ns] array (NaT where empty, unparseable or out of range)
    bad : bool array, True where the cell is not empty and is not a date in range
    """
    dates, bad, out_of_range = parse_dates_in_range(text, order)
    return dates, bad | out_of_range


def parse_dates_in_range(text: pd.Series, order: str = "iso", earliest: str = "1900-01-01"
                         ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse a date column, once per distinct value, keeping only dates from ``earliest`` to 2200.

    Parameters
    ----------
    text : pandas.Series of str
    order : {"iso", "dmy", "mdy"}
        ``iso`` accepts ISO 8601 only (``2021-03-04``, ``2021-03-04 10:30``). ``dmy``/``mdy`` also
        accept day-first (``04/03/2021``) or month-first (``03/04/2021``) forms. Never guessed.
    earliest : str
        The earliest plausible date (ISO); an earlier date, like one after :data:`LATEST_DATE`, is
        out of range (it would also not fit pandas' nanosecond dates, which silently wrap).

    Returns
    -------
    dates : numpy datetime64[ns] array (NaT where empty, unparseable or out of range)
    bad : bool array, True where the cell is not empty and could not be parsed
    out_of_range : bool array, True where the cell is a date outside the range

    Examples
    --------
    >>> d, bad, out = parse_dates_in_range(pd.Series(["0201-03-04", "2021-03-04 10:30:15", "x", ""]))
    >>> d.astype(str).tolist(), bad.tolist(), out.tolist()
    (['NaT', '2021-03-04T10:30:15.000000000', 'NaT', 'NaT'], [False, False, True, False], [True, False, False, False])
    """
    if order not in DATE_ORDERS:
        raise ValueError(f"date order must be one of {DATE_ORDERS}")
    s = text.fillna("").astype(str)
    codes, uniques = pd.factorize(s)
    parsed = _parse_unique_dates(pd.Index(uniques), order).to_numpy(dtype="datetime64[us]")
    lo = np.datetime64(pd.Timestamp(earliest).to_datetime64(), "us")
    v_out = ~np.isnat(parsed) & ((parsed < lo) | (parsed > np.datetime64(LATEST_DATE.to_datetime64(), "us")))
    parsed = np.where(v_out, np.datetime64("NaT"), parsed).astype("datetime64[ns]")
    dates = parsed[codes] if len(uniques) else np.array([], dtype="datetime64[ns]")
    out_of_range = v_out[codes] if len(uniques) else np.zeros(0, dtype=bool)
    empty = (s.str.strip() == "").to_numpy()
    bad = np.isnat(dates) & ~empty & ~out_of_range
    return dates, bad, out_of_range


def parse_vocabulary(text: pd.Series, vocab: dict[str, str]) -> tuple[np.ndarray, np.ndarray]:
    """Map vocabulary text (fraction, sample type) to canonical words; returns (values, unknown)."""
    s = text.fillna("").astype(str)
    codes, uniques = pd.factorize(s)
    keys = _vocab_key(pd.Series(uniques, dtype=object).astype(str))
    table = np.array([vocab.get(k, vocab.get(k.replace(" ", ""), None)) for k in keys] + [None], dtype=object)
    out = table[np.where(codes < 0, len(uniques), codes)]
    unknown = pd.isna(out).astype(bool) & (s.str.strip() != "").to_numpy()
    return out, unknown


def parse_uncertainty(text: pd.Series, value: np.ndarray, decimal_comma: bool = False
                      ) -> tuple[np.ndarray, np.ndarray]:
    """Expanded uncertainty in the row's unit: an absolute number, or ``15%`` of the result.

    Returns (uncertainty, bad). A percentage of a non-detect is NaN (nothing to spread).
    """
    s = text.fillna("").astype(str).str.strip()
    is_pct = s.str.endswith("%").to_numpy()
    num = to_number(s.str.rstrip("%"), decimal_comma).to_numpy()
    out = np.where(is_pct, num / 100.0 * value, num)
    bad = ((s != "").to_numpy() & np.isnan(num)) | (num < 0)
    return out, bad


for _k, _v in _sample_types_from_data().items():
    SAMPLE_TYPE_VOCAB.setdefault(_k, _v)
