"""Parsing the cells of a lab file: results with non-detects, dates, fractions, sample types.

Every parser here is vectorised: it works on a whole column (a pandas Series of text) and, where
the column repeats few distinct values (dates, units, vocabularies), on its distinct values only.
Each returns the parsed values and a boolean mask of cells it could not parse, so that the loader
can reject exactly those rows with a reason.

Result cells (common laboratory reporting practice):

* a number: detected (``1.2``, ``0.005``, ``1.2E-3``); with qualifier ``J``: detected, estimated;
* ``<x`` or ``< x``: not detected at detection limit ``x`` (same unit as the row);
* ``ND``, ``not detected``, ``n.d.``, ``BDL``, ``<DL``, ``<LOR`` ...: not detected; the detection
  limit comes from the detection-limit column;
* blank with qualifier ``U``: not detected (detection limit from its column);
* a number with qualifier ``U`` (``0.5`` + ``U``, or ``0.5 U``): not detected at that value unless a
  detection-limit column gives it;
* ``>x`` (above the calibration range) cannot be screened and is rejected with that reason.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from tracescreen.io import qualifiers
from tracescreen.vocabulary import DATE_ORDERS

ND_WORDS = frozenset({
    "nd", "n.d.", "n.d", "notdetected", "not detected", "bdl", "belowdetectionlimit",
    "below detection limit", "<dl", "<lor", "<mdl", "<rl", "<lod", "<loq", "<pql", "u",
})

FRACTION_VOCAB = {
    "total": "total", "t": "total", "tot": "total", "totalrecoverable": "total", "recoverable": "total",
    "unfiltered": "total", "whole": "total", "tr": "total",
    "dissolved": "dissolved", "d": "dissolved", "diss": "dissolved", "filtered": "dissolved",
    "soluble": "dissolved", "f": "dissolved",
}

def _fractions_from_data() -> dict[str, str]:
    """WQX ``ResultSampleFractionText`` values and lab fraction codes of ``data/fractions.yaml``
    (total or dissolved only; the others, e.g. suspended, stay unreadable and are reported)."""
    from pathlib import Path

    import yaml

    from tracescreen._internal.yamlfiles import SAFE_LOADER

    data = yaml.load((Path(__file__).resolve().parents[1] / "data" / "fractions.yaml").read_text(encoding="utf-8"),
                     Loader=SAFE_LOADER)
    out: dict[str, str] = {}
    for section in ("wqx_fraction", "lab_codes"):
        for e in data.get(section) or []:
            if e.get("fraction") in ("total", "dissolved"):
                out.setdefault(re.sub(r"[\s_\-]+", "", str(e["code"]).strip().lower()), e["fraction"])
    return out


for _k, _v in _fractions_from_data().items():
    FRACTION_VOCAB.setdefault(_k, _v)

SAMPLE_TYPE_VOCAB = {
    "sample": "sample", "": "sample", "normal": "sample", "regular": "sample", "primary": "sample",
    "routine": "sample", "n": "sample", "field sample": "sample", "fieldsample": "sample",
    "field_duplicate": "field_duplicate", "fieldduplicate": "field_duplicate", "duplicate": "field_duplicate",
    "dup": "field_duplicate", "fd": "field_duplicate", "fielddup": "field_duplicate",
    "field_blank": "field_blank", "fieldblank": "field_blank", "fb": "field_blank",
    "equipmentblank": "field_blank", "rinsateblank": "field_blank", "eb": "field_blank",
    "lab_blank": "lab_blank", "labblank": "lab_blank", "laboratoryblank": "lab_blank",
    "methodblank": "lab_blank", "mb": "lab_blank", "lb": "lab_blank",
}

#: Sample kinds of ``data/sample_types.yaml`` that are set aside (not results for screening), by
#: kind; the kinds kept are the four above (equipment and trip blanks are judged as field blanks).
SET_ASIDE_KINDS = {"lab_qc": "laboratory QC sample", "reference_material": "reference material",
                   "field_measurement": "field measurement, not a laboratory result"}
_KIND_AS = {"sample": "sample", "field_duplicate": "field_duplicate", "field_blank": "field_blank",
            "lab_blank": "lab_blank", "equipment_blank": "field_blank", "trip_blank": "field_blank"}


def _sample_types_from_data() -> dict[str, str]:
    """WQX ActivityTypeCode values, NWIS sample_type_cd and lab codes of ``data/sample_types.yaml``:
    normalised code -> canonical sample type, or ``set_aside:<kind>`` for rows not screened."""
    from pathlib import Path

    import yaml

    from tracescreen._internal.yamlfiles import SAFE_LOADER

    data = yaml.load((Path(__file__).resolve().parents[1] / "data" / "sample_types.yaml").read_text(encoding="utf-8"),
                     Loader=SAFE_LOADER)
    out: dict[str, str] = {}
    for section in ("wqx_activity_type", "lab_codes", "nwis_sample_type"):
        for e in data.get(section) or []:
            kind = e.get("kind")
            target = _KIND_AS.get(kind) or (f"set_aside:{kind}" if kind in SET_ASIDE_KINDS else None)
            if target:
                out.setdefault(re.sub(r"[\s_\-]+", "", str(e["code"]).strip().lower()), target)
    return out


_DMY_FORMATS = ("%d/%m/%Y", "%d.%m.%Y", "%d-%m-%Y", "%d/%m/%y", "%d.%m.%y")
_MDY_FORMATS = ("%m/%d/%Y", "%m-%d-%Y", "%m/%d/%y")
_TIME_SUFFIXES = ("", " %H:%M", " %H:%M:%S")

_NUM = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_LT_RE = re.compile(rf"^<\s*=?\s*({_NUM})$")
_GT_RE = re.compile(rf"^>\s*=?\s*({_NUM})$")
_NUM_QUAL_RE = re.compile(rf"^({_NUM})\s*([A-Za-z]{{1,3}})$")


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
    out = vals.to_numpy(zero_copy_only=False)
    return pd.Series(np.where(np.isnan(out), np.nan, out).astype(float), index=text.index)


def parse_results(result: pd.Series, qualifier: pd.Series, detection_limit: pd.Series,
                  decimal_comma: bool = False, remark: pd.Series | None = None,
                  condition: pd.Series | None = None) -> dict[str, np.ndarray]:
    """Parse result cells into value, detected flag and detection limit (all in the row's unit).

    Parameters
    ----------
    result, qualifier, detection_limit : pandas.Series of str
        The cells as reported ("" where empty).
    decimal_comma : bool
        Read ``,`` as the decimal separator.
    remark, condition : pandas.Series of str, optional
        A remark-code column (USGS NWIS ``remark_cd``) and a detection-condition column (WQX
        ``ResultDetectionConditionText``), read with their own vocabularies
        (:mod:`tracescreen.io.qualifiers`).

    Returns
    -------
    dict of numpy arrays
        ``value`` (float, NaN for non-detects), ``detected`` (bool), ``detection_limit`` (float),
        ``error`` (object: None or a reason text for cells that cannot be used), ``set_aside``
        (object: None or why a usable cell is not a result to screen, e.g. qualifier R), ``meaning``
        (object: the qualifier meanings found, ``;``-joined, with ``unknown:CODE`` for codes in no
        vocabulary).
    """
    n = len(result)
    res = result.fillna("").astype(str).str.strip()
    dl_text = detection_limit.fillna("").astype(str).str.strip()
    read = [qualifiers.read_column(qualifier.fillna("").astype(str), "qualifier")]
    if remark is not None:
        read.append(qualifiers.read_column(remark.fillna("").astype(str), "remark_code"))
    if condition is not None:
        read.append(qualifiers.read_column(condition.fillna("").astype(str), "detection_condition"))
    meaning = qualifiers.combine(*read).to_numpy(dtype=object)
    unknown_codes = qualifiers.combine(*[pd.DataFrame({"meanings": r["unknown"]}) for r in read]).to_numpy(dtype=object)

    value = to_number(res, decimal_comma).to_numpy(dtype=float, copy=True)
    dl_col = to_number(dl_text, decimal_comma).to_numpy(dtype=float, copy=True)
    error = np.full(n, None, dtype=object)

    bad_dl = (dl_text != "").to_numpy() & np.isnan(dl_col)
    error[bad_dl] = ("detection limit '" + dl_text[bad_dl] + "' is not a number").to_numpy()

    qual_u = qualifiers.has_meaning(meaning, qualifiers.NONDETECT_MEANINGS).copy()
    numeric = ~np.isnan(value)
    detected = numeric.copy()
    dl = dl_col.copy()

    todo = ~numeric  # everything that is not a plain number is looked at here
    if todo.any():
        # analyse each distinct text once ("<0.5" repeats thousands of times), then broadcast
        codes, uniq = pd.factorize(res[todo])
        u = pd.Series(np.asarray(uniq, dtype=object), dtype=object)
        u_c = u.str.replace(",", ".", regex=False) if decimal_comma else u
        lt = u_c.str.extract(_LT_RE, expand=False).iloc[codes].reset_index(drop=True)
        gt = u_c.str.extract(_GT_RE, expand=False).iloc[codes].reset_index(drop=True)
        numq = u_c.str.extract(_NUM_QUAL_RE, expand=True).iloc[codes].reset_index(drop=True)
        is_nd_word = u.str.lower().str.replace(r"\s+", " ", regex=True).isin(ND_WORDS).to_numpy()[codes]
        is_blank = (u == "").to_numpy()[codes]
        sub = u.iloc[codes].reset_index(drop=True)
        idx = np.flatnonzero(todo)

        lt_ok = lt.notna().to_numpy()
        lt_val = pd.to_numeric(lt, errors="coerce").to_numpy(dtype=float)
        # "<x": non-detect at x; a separate detection-limit column, if any, is kept as reported
        dl[idx[lt_ok]] = np.where(np.isnan(dl_col[idx[lt_ok]]), lt_val[lt_ok], dl_col[idx[lt_ok]])
        detected[idx[lt_ok]] = False

        # ">x": above the calibrated or reported range, kept as "at least x" (meaning above_range);
        # screening decides exceeds when x is above the limit, else above_range_inconclusive
        gt_ok = gt.notna().to_numpy()
        gt_val = pd.to_numeric(gt, errors="coerce").to_numpy(dtype=float)
        value[idx[gt_ok]] = gt_val[gt_ok]
        detected[idx[gt_ok]] = True
        cur = meaning[idx[gt_ok]]
        meaning[idx[gt_ok]] = np.where(cur == "", "above_range",
                                       np.where(pd.Series(cur, dtype=object).str.contains("above_range", regex=False),
                                                cur, cur + ";above_range"))

        # "0.5 U" / "1.2 J": number followed by qualifier letters
        nq_ok = numq[0].notna().to_numpy()
        nq_val = pd.to_numeric(numq[0], errors="coerce").to_numpy(dtype=float)
        nq_read = qualifiers.read_column(numq[1].fillna("").astype(str), "qualifier")
        nq_u = nq_ok & qualifiers.has_meaning(nq_read["meanings"], qualifiers.NONDETECT_MEANINGS)
        nq_meaning = nq_read["meanings"].to_numpy(dtype=object)
        add = nq_ok & (nq_meaning != "")
        cur = meaning[idx[add]]
        meaning[idx[add]] = np.where(cur == "", nq_meaning[add], cur + ";" + nq_meaning[add])
        nq_det = nq_ok & ~nq_u
        value[idx[nq_det]] = nq_val[nq_det]
        detected[idx[nq_det]] = True
        value[idx[nq_u]] = nq_val[nq_u]
        qual_u[idx[nq_u]] = True

        nd_word = is_nd_word | (is_blank & qual_u[idx])
        detected[idx[nd_word]] = False
        unknown = ~(lt_ok | gt_ok | nq_ok | nd_word)
        blank_unknown = unknown & is_blank
        error[idx[blank_unknown]] = "result is empty (and no non-detect qualifier or detection condition)"
        other = unknown & ~is_blank
        error[idx[other]] = ("result '" + sub[other] + "' is not a number, '<x' or a non-detect code").to_numpy()

    # A detected 0 is the "none found" convention of old records, not a measured zero: with a
    # detection-limit column it is a non-detect at that limit; without one it is set aside (a
    # non-detect whose limit is unknown cannot be screened). README, "Results of exactly 0".
    zero = detected & (value == 0) & ~qual_u
    qual_u |= zero & ~np.isnan(dl_col)
    zero_no_dl = zero & np.isnan(dl_col)

    # A number with qualifier U: not detected at that number (or at the DL column if given)
    num_u = ~np.isnan(value) & qual_u
    dl[num_u] = np.where(np.isnan(dl_col[num_u]), value[num_u], dl_col[num_u])
    detected[num_u] = False
    value[~detected] = np.nan

    rejected = qualifiers.has_meaning(meaning, {"rejected"}) & (error == None)  # noqa: E711 (object array)
    set_aside = np.full(n, None, dtype=object)
    set_aside[rejected] = "result qualified as unusable (rejected by the laboratory or data review)"
    zero_aside = zero_no_dl & ~rejected & (error == None)  # noqa: E711 (object array)
    set_aside[zero_aside] = ("result 0 reported as detected: the old 'none found' convention, a non-detect "
                             "whose detection limit is not given")
    value[zero_aside], detected[zero_aside] = np.nan, False
    # a number qualified above the calibrated range (remark '>', 'Above Operating Range') is kept
    # as "at least" that number, like ">x" (meaning above_range); screening decides

    nd_no_dl = ~detected & np.isnan(dl) & (error == None) & ~zero_aside  # noqa: E711 (object array)
    error[nd_no_dl] = "non-detect without a detection limit"
    neg = (value < 0) | (dl < 0)
    error[neg & (error == None)] = "negative concentration or detection limit"  # noqa: E711
    zero_dl = ~detected & (dl == 0)
    error[zero_dl & (error == None)] = "non-detect with a detection limit of zero"  # noqa: E711
    has_unknown = unknown_codes != ""
    unk = np.where(has_unknown, "unknown:" + pd.Series(unknown_codes, dtype=object).str.replace(";", ";unknown:", regex=False).to_numpy(dtype=object), "")
    meaning = np.where(has_unknown, np.where(meaning == "", unk, meaning + ";" + unk), meaning)
    return {"value": value, "detected": detected, "detection_limit": dl, "error": error, "meaning": meaning,
            "set_aside": set_aside}


def _parse_unique_dates(uniques: pd.Index, order: str) -> pd.Series:
    """Parse distinct date strings; NaT where none of the allowed forms fits."""
    s = pd.Series(uniques.astype(str), index=uniques).str.strip()
    # a time-zone name after a time ("10:30 EST", "10:30:00 UTC") is read, not applied: dates are
    # kept in the local clock time the sample was taken in (README, "Dates and times")
    s = s.str.replace(r"(\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)\s+[A-Za-z]{1,5}$", r"\1", regex=True)
    # so is a UTC offset ("2021-03-04T10:30:00-05:00" is 10:30 local time on 4 March)
    s = s.str.replace(r"(\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)\s*(?:Z|[+-]\d{2}:?\d{2})$", r"\1", regex=True)
    iso = pd.to_datetime(s, format="ISO8601", errors="coerce")
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
                out[missing] = pd.to_datetime(s[missing], format=f + t, errors="coerce")
    if getattr(out.dt, "tz", None) is not None:
        out = out.dt.tz_localize(None)
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
    """Parse a date column, once per distinct value.

    Parameters
    ----------
    text : pandas.Series of str
    order : {"iso", "dmy", "mdy"}
        ``iso`` accepts ISO 8601 only (``2021-03-04``, ``2021-03-04 10:30``). ``dmy``/``mdy`` also
        accept day-first (``04/03/2021``) or month-first (``03/04/2021``) forms. Never guessed.

    Returns
    -------
    dates : numpy datetime64[ns] array (NaT where empty or unparseable)
    bad : bool array, True where the cell is not empty and could not be parsed
    """
    if order not in DATE_ORDERS:
        raise ValueError(f"date order must be one of {DATE_ORDERS}")
    s = text.fillna("").astype(str)
    codes, uniques = pd.factorize(s)
    parsed = _parse_unique_dates(pd.Index(uniques), order).to_numpy(dtype="datetime64[ns]")
    dates = parsed[codes] if len(uniques) else np.array([], dtype="datetime64[ns]")
    empty = (s.str.strip() == "").to_numpy()
    bad = np.isnat(dates) & ~empty
    return dates, bad


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
