"""Combine the qualifiers that several QC elements give one result: the most protective wins.

Qualifiers and meanings (US EPA National Functional Guidelines, Table 1 [USEPA2020NFG]_):
``U`` not detected at the reported level; ``J`` detected, estimated; ``J+`` / ``J-`` estimated,
likely biased high / low; ``UJ`` not detected, the reported level approximate; ``R`` unusable.

Rules (one result, all its qualifiers):

1. any ``R`` -> ``R`` (unusable beats everything);
2. a detected result qualified ``U`` (a blank) is a non-detect: ``U``, or ``UJ`` when another
   element also estimates it;
3. a detected result: ``J+`` and ``J-`` together -> ``J`` (the bias directions cancel into an
   unknown one); otherwise the direction given (``J+`` or ``J-``), else ``J``;
4. a non-detect: ``UJ`` when any element gives it.

>>> combine_one(["J+", "J-"], detected=True), combine_one(["U", "J-"], detected=True)
('J', 'UJ')
>>> combine_one(["UJ", "R"], detected=False), combine_one(["J+", "J"], detected=True)
('R', 'J+')

:func:`combine` works on the link table of a whole review without a loop over results: each
qualifier is a bit, a result's set of qualifiers is the OR of its links' bits
(``numpy.bitwise_or.reduceat`` over the links sorted by result), and the combined qualifier is read
from a table of all 2 × 64 (detected, set) cases built once with :func:`combine_one`.
"""

from __future__ import annotations

import functools

import numpy as np
import pandas as pd

QUALIFIERS = ("R", "UJ", "U", "J-", "J+", "J")
"""The qualifiers a review assigns (most protective first, for display)."""


def combine_one(qualifiers, detected: bool) -> str:
    """The combined qualifier of one result (see the module docstring)."""
    q = set(qualifiers) - {""}
    if not q:
        return ""
    if "R" in q:
        return "R"
    if detected:
        if "U" in q:
            return "UJ" if q & {"J", "J+", "J-", "UJ"} else "U"
        if {"J+", "J-"} <= q:
            return "J"
        return "J+" if "J+" in q else "J-" if "J-" in q else "J"
    return "UJ" if q & {"UJ", "U", "J", "J-", "J+"} else ""


@functools.lru_cache(maxsize=1)
def _table() -> np.ndarray:
    """Combined qualifier for every (detected, set of qualifiers as bits)."""
    out = np.empty((2, 1 << len(QUALIFIERS)), dtype=object)
    for d in (0, 1):
        for bits in range(1 << len(QUALIFIERS)):
            out[d, bits] = combine_one([q for i, q in enumerate(QUALIFIERS) if bits >> i & 1], bool(d))
    return out


def group_join(codes: np.ndarray, texts: np.ndarray, sep: str) -> tuple[np.ndarray, np.ndarray]:
    """Join ``texts`` by group (``codes`` sorted ascending), repeats dropped, order kept.

    Returns (the distinct codes, the joined text of each). The concatenation runs in numpy's
    object ``add.reduceat``, not in a Python loop over groups.

    >>> group_join(np.array([0, 0, 0, 2]), np.array(["a", "b", "a", "c"], dtype=object), "; ")
    (array([0, 2]), array(['a; b', 'c'], dtype=object))
    """
    keep = ~pd.DataFrame({"c": codes, "t": texts}).duplicated().to_numpy()
    codes, texts = codes[keep], texts[keep].astype(object)
    if not len(codes):
        return codes, texts
    starts = np.flatnonzero(np.r_[True, codes[1:] != codes[:-1]])
    joined = np.add.reduceat(texts + sep, starts)
    return codes[starts], pd.Series(joined, dtype=object).str[:-len(sep)].to_numpy(dtype=object)


def combine(links: pd.DataFrame, detected: np.ndarray) -> pd.DataFrame:
    """One row per qualified result: ``result_pos, lab_qc_qualifier, lab_qc_elements,
    lab_qc_reasons, nondetect_limit_ug_L``."""
    if links.empty:
        return pd.DataFrame({"result_pos": pd.Series(dtype="int64"), "lab_qc_qualifier": pd.Series(dtype=object),
                             "lab_qc_elements": pd.Series(dtype=object), "lab_qc_reasons": pd.Series(dtype=object),
                             "nondetect_limit_ug_L": pd.Series(dtype=float)})
    order = np.argsort(links["result_pos"].to_numpy(), kind="stable")
    lk = links.iloc[order]
    pos = lk["result_pos"].to_numpy(np.int64)
    starts = np.flatnonzero(np.r_[True, pos[1:] != pos[:-1]])
    bit = {q: 1 << i for i, q in enumerate(QUALIFIERS)}
    bits = np.bitwise_or.reduceat(lk["qualifier"].map(bit).to_numpy(np.int64), starts)
    first = pos[starts]
    det = np.asarray(detected, dtype=bool)[first].astype(np.int64)
    _, elements = group_join(pos, lk["element"].to_numpy(object), ";")
    text = (lk["element"] + " " + lk["qualifier"] + ": " + lk["rule"]).to_numpy(object)
    _, reasons = group_join(pos, text, " | ")
    ndl = np.fmax.reduceat(lk["nondetect_limit_ug_L"].to_numpy(float), starts)
    return pd.DataFrame({"result_pos": first, "lab_qc_qualifier": _table()[det, bits],
                         "lab_qc_elements": elements, "lab_qc_reasons": reasons, "nondetect_limit_ug_L": ndl})
