"""pH, dissolved organic carbon and temperature reported as result rows become inputs of the sample.

Computed limits need the water chemistry of the sample (the Canadian zinc guideline needs hardness,
pH and DOC; the aluminium guideline needs pH). Portal downloads and lab deliverables report these as
result rows beside the metals (WQX ``pH``, ``Organic carbon`` with fraction ``Dissolved``,
``Temperature, water``; NWIS 00400, 00681, 00010). Like hardness rows
(:mod:`tracescreen.io.hardness_rows`), such a row is set aside, not screened, and its value is spread
to the rows of the same site and sample id: ``ph`` [pH units], ``doc_mg_L`` [mg/L],
``temperature_C`` [°C]. The names are data (``data/water_chemistry.yaml``, with sources).
"""

from __future__ import annotations

import functools
import re
from importlib import resources

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import parse_yaml

#: Input -> accepted-results column.
COLUMNS = {"ph": "ph", "doc": "doc_mg_L", "temperature": "temperature_C"}
#: Input -> words for the set-aside reason.
WORDS = {"ph": "pH", "doc": "dissolved organic carbon", "temperature": "temperature"}
_FAHRENHEIT = re.compile(r"^\s*(deg(rees)?\s*)?°?\s*f(ahrenheit)?\s*$", re.I)


def _key(text: str) -> str:
    return re.sub(r"[\s,;:_\-./()]+", "", str(text).strip().lower())


@functools.lru_cache(maxsize=1)
def _names() -> dict[str, str]:
    text = resources.files("tracescreen").joinpath("data/water_chemistry.yaml").read_text("utf-8")
    data = parse_yaml(text, "water_chemistry.yaml")
    return {_key(n): kind for kind, names in data.items() for n in names}


def input_kind(labels: pd.Series, dissolved: np.ndarray) -> np.ndarray:
    """Per row: ``ph``, ``doc``, ``temperature`` or "" (one name test per distinct label).

    ``dissolved`` (bool per row) makes "Organic carbon" dissolved organic carbon.
    """
    codes, uniq = pd.factorize(labels.fillna("").astype(str))
    names = _names()
    kind = np.array([names.get(_key(u), "") for u in uniq], dtype=object)
    out = kind[codes] if len(uniq) else np.zeros(len(labels), dtype=object)
    when = out == "doc_when_dissolved"
    return np.where(when, np.where(dissolved, "doc", ""), out).astype(object)


def input_values(kind: np.ndarray, value: np.ndarray, unit_plain: np.ndarray,
                 ug_per_L_factor: np.ndarray) -> np.ndarray:
    """Each input row's value in its input unit (NaN where the unit does not fit).

    pH is taken as reported; DOC needs a mass-per-volume unit (converted to mg/L); temperature is °C
    unless the unit says Fahrenheit (converted).
    """
    v = np.asarray(value, dtype=float)
    out = np.full(len(v), np.nan)
    ph = kind == "ph"
    out[ph] = v[ph]
    doc = kind == "doc"
    out[doc] = v[doc] * ug_per_L_factor[doc] / 1000.0
    t = kind == "temperature"
    fahrenheit = np.fromiter((bool(_FAHRENHEIT.match(str(u))) for u in unit_plain[t]), dtype=bool, count=int(t.sum()))
    out[t] = np.where(fahrenheit, (v[t] - 32.0) * 5.0 / 9.0, v[t])
    return out


def inputs_of_samples(sample_code: np.ndarray, kind: np.ndarray, values: np.ndarray) -> dict[str, np.ndarray]:
    """Column name -> value per row from the sample's input rows (mean of several; NaN where none)."""
    n_s = int(sample_code.max()) + 1 if len(sample_code) else 0
    out = {}
    for k, col in COLUMNS.items():
        m = (kind == k) & ~np.isnan(values)
        total = np.zeros(n_s)
        count = np.zeros(n_s)
        np.add.at(total, sample_code[m], values[m])
        np.add.at(count, sample_code[m], 1.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            per = np.where(count > 0, total / count, np.nan)
        out[col] = per[sample_code] if len(sample_code) else np.zeros(0)
    return out


_UNKNOWN_ANALYTE = re.compile(r"analyte '.*?' is not in the analyte registry \(not screened by tracescreen\)(; )?")


def sample_inputs_from_rows(analyte_text, dissolved: np.ndarray, aside: np.ndarray, parsed: dict, combo: np.ndarray,
                            unit_codes: np.ndarray, unit_plain, ug_per_L_factor: np.ndarray,
                            sample_code) -> dict[str, np.ndarray]:
    """The loader's step for input rows: mark them set aside with their reason (in ``aside``, in place;
    other reasons such as a rejected result stay) and return column -> value per row of the sample.

    ``analyte_text`` is the analyte column (coded text), ``dissolved`` a bool per row, ``parsed`` and
    ``combo`` the parsed results per distinct combination and each row's combination, ``unit_codes``
    each row's distinct-unit code into ``unit_plain`` / ``ug_per_L_factor``; ``sample_code`` (one code per
    sample, or a function giving them) is worked out only for a table holding input rows.
    """
    n = len(dissolved)
    names = analyte_text.series()
    v_kind = input_kind(names, np.zeros(len(names), dtype=bool)).astype(object)  # per distinct label
    v_doc = (v_kind == "") & (input_kind(names, np.ones(len(names), dtype=bool)) == "doc")
    doc = analyte_text.rows(v_doc) & dissolved
    is_input = analyte_text.rows(v_kind != "") | doc
    if not is_input.any():
        return {c: np.full(n, np.nan) for c in COLUMNS.values()}
    kind = np.where(doc, "doc", analyte_text.rows(v_kind))
    sample_code = sample_code() if callable(sample_code) else sample_code
    other = np.array([_UNKNOWN_ANALYTE.sub("", a) for a in aside[is_input]], dtype=object)
    words = np.array([WORDS[k] for k in kind[is_input]], dtype=object)
    aside[is_input] = words + " result: used as an input of the sample's computed limits" + \
        np.where(other == "", "", "; " + other)
    ok = is_input & parsed["detected"][combo] & pd.isna(parsed["error"][combo]).astype(bool)
    ok[is_input] &= other == ""
    values = input_values(kind, np.where(ok, parsed["value"][combo], np.nan),
                          np.asarray(unit_plain, dtype=object)[unit_codes], np.asarray(ug_per_L_factor)[unit_codes])
    return inputs_of_samples(sample_code, np.where(ok, kind, ""), values)
