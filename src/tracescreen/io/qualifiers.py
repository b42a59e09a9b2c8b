"""Result qualifiers read code by code from a vocabulary, never letter by letter.

A lab or portal file says what a result *is* in up to three places besides the result cell: a
qualifier column (laboratory or data-validation flags: ``U``, ``J+``, ``R``; WQX
``MeasureQualifierCode``), a remark column (USGS NWIS ``remark_cd``: ``<``, ``E``) and a detection
condition (WQX ``ResultDetectionConditionText``: "Not Detected"). The same letter means different
things in different vocabularies (NWIS remark ``R`` is a radiochemical non-detect, a validation
``R`` is a rejected result), so each column is read with its own namespaces of
``data/qualifiers.yaml`` [nfg2020]_ [wqx]_ [usgs-remark]_, in order, first match wins.

How a cell is read (each distinct cell once):

1. the whole cell, trimmed, as a phrase (case-insensitive): ``"Not Detected"``;
2. the whole cell as one code (case-sensitive): ``"J+"``;
3. otherwise split on ``;``, ``,`` and spaces and look up each code (case-sensitive; an
   all-lower-case code is also tried in upper case, as labs write ``u`` for ``U``).

A code found in no namespace is kept in ``unknown`` (reported, never guessed). Nothing is ever
matched by a letter inside a longer code: ``CUG`` and ``Duplicate`` are not ``U``.

References
----------
.. [nfg2020] US EPA (2020). CLP National Functional Guidelines for Inorganic Superfund Methods
   Data Review (qualifiers U, J, J+, J-, UJ, R).
.. [wqx] US EPA WQX domain values ResultMeasureQualifier and ResultDetectionCondition.
.. [usgs-remark] USGS NWIS water-quality remark codes (remark_cd).
The full citations and where each code was checked are in ``data/qualifiers.yaml``.
"""

from __future__ import annotations

import re
from functools import cache, lru_cache
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import read_yaml

VOCABULARY_FILE = Path(__file__).resolve().parents[1] / "data" / "qualifiers.yaml"

#: The namespaces each kind of column is read with, in order (first match wins).
COLUMN_NAMESPACES: dict[str, tuple[str, ...]] = {
    "qualifier": ("validation", "wqx_measure_qualifier", "wqx_detection_condition"),
    "remark_code": ("usgs_remark",),
    "detection_condition": ("wqx_detection_condition",),
    "value_qualifier": ("usgs_value_qualifier",),
}
#: Namespaces whose codes are phrases, matched without case.
PHRASE_NAMESPACES = frozenset({"wqx_detection_condition"})

NONDETECT_MEANINGS = frozenset({"nondetect", "nondetect_estimated"})
ESTIMATED_MEANINGS = frozenset({"detected_estimated", "estimated_high", "estimated_low", "nondetect_estimated"})

_SPLIT = re.compile(r"[;,\s]+")


@lru_cache(maxsize=1)
def vocabulary() -> pd.DataFrame:
    """Every code of ``data/qualifiers.yaml``: ``namespace, code, meaning, source, checked, text``."""
    data = read_yaml(VOCABULARY_FILE)
    meanings = data["meanings"]
    rows = []
    for ns, codes in data["namespaces"].items():
        for c in codes:
            if c["meaning"] not in meanings:
                raise ValueError(f"{VOCABULARY_FILE.name}: {ns} code {c['code']!r}: unknown meaning {c['meaning']!r}")
            rows.append({"namespace": ns, "code": str(c["code"]), "meaning": c["meaning"],
                         "source": c.get("source", ""), "checked": c.get("checked", ""),
                         "text": c.get("text", "")})
    return pd.DataFrame(rows)


@cache
def _lookups(namespaces: tuple[str, ...]) -> tuple[dict[str, str], dict[str, str]]:
    """(codes, phrases): code -> meaning (case-sensitive) and lower-case phrase -> meaning; first namespace wins."""
    voc = vocabulary()
    codes: dict[str, str] = {}
    phrases: dict[str, str] = {}
    for ns in namespaces:
        part = voc[voc["namespace"] == ns]
        if part.empty:
            raise ValueError(f"{VOCABULARY_FILE.name}: no namespace {ns!r}")
        target = phrases if ns in PHRASE_NAMESPACES else codes
        for code, meaning in zip(part["code"], part["meaning"]):
            key = " ".join(code.lower().split()) if ns in PHRASE_NAMESPACES else code
            target.setdefault(key, meaning)
    return codes, phrases


def _read_one(cell: str, codes: dict[str, str], phrases: dict[str, str]) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(meanings, unknown codes) of one cell."""
    text = cell.strip()
    if not text:
        return (), ()
    phrase = phrases.get(" ".join(text.lower().split()))
    if phrase is not None:
        return (phrase,), ()
    if text in codes:
        return (codes[text],), ()
    found: list[str] = []
    unknown: list[str] = []
    for tok in _SPLIT.split(text):
        if not tok:
            continue
        m = codes.get(tok)
        if m is None and tok.islower():
            m = codes.get(tok.upper())
        if m is None:
            unknown.append(tok)
        elif m not in found:
            found.append(m)
    return tuple(found), tuple(unknown)


def read_column(text: pd.Series, column: str) -> pd.DataFrame:
    """Meanings of each cell of a qualifier, remark or detection-condition column.

    Parameters
    ----------
    text : pandas.Series of str
        The cells as reported ("" where empty).
    column : {"qualifier", "remark_code", "detection_condition"}
        Which kind of column, which decides the namespaces (:data:`COLUMN_NAMESPACES`).

    Returns
    -------
    pandas.DataFrame
        Aligned with ``text``: ``meanings`` (str, the meanings found, joined with ``;``) and
        ``unknown`` (str, codes found in no namespace, joined with ``;``).
    """
    codes, phrases = _lookups(COLUMN_NAMESPACES[column])
    idx, uniq = pd.factorize(text.fillna("").astype(str), sort=False)
    read = [_read_one(u, codes, phrases) for u in uniq]  # each distinct cell once
    meanings = np.array([";".join(m) for m, _ in read] or [""], dtype=object)
    unknown = np.array([";".join(u) for _, u in read] or [""], dtype=object)
    take = np.maximum(idx, 0)
    return pd.DataFrame({"meanings": meanings[take] if len(uniq) else np.full(len(text), "", dtype=object),
                         "unknown": unknown[take] if len(uniq) else np.full(len(text), "", dtype=object)},
                        index=text.index)


def combine(*frames: pd.DataFrame) -> pd.Series:
    """Meanings of several columns of the same rows, joined with ``;`` without repeats, in column order."""
    joined = frames[0]["meanings"].astype(str)
    for f in frames[1:]:
        m = f["meanings"].astype(str)
        joined = np.where(joined == "", m, np.where(m == "", joined, joined + ";" + m))
        joined = pd.Series(joined, index=frames[0].index)
    uniq, idx = np.unique(np.asarray(joined, dtype=str), return_inverse=True)
    dedup = np.array([";".join(dict.fromkeys(u.split(";"))) if u else "" for u in uniq], dtype=object)
    return pd.Series(dedup[idx] if len(uniq) else np.array([], dtype=object), index=frames[0].index)


def has_meaning(meanings: pd.Series | np.ndarray, wanted: frozenset[str] | set[str]) -> np.ndarray:
    """Boolean mask: cells whose ``;``-joined meanings include any of ``wanted``."""
    arr = np.asarray(meanings, dtype=object)
    uniq, idx = np.unique(arr.astype(str), return_inverse=True)
    hit = np.array([bool(wanted.intersection(u.split(";"))) for u in uniq], dtype=bool)
    return hit[idx] if len(uniq) else np.zeros(0, dtype=bool)


def knows(code: str, column: str = "qualifier") -> bool:
    """Is ``code`` (one code or phrase) in the vocabularies a ``column`` is read with?"""
    codes, phrases = _lookups(COLUMN_NAMESPACES[column])
    text = str(code).strip()
    return text in codes or " ".join(text.lower().split()) in phrases
