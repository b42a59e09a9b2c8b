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
"""

from __future__ import annotations

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


def combine(links: pd.DataFrame, detected: np.ndarray) -> pd.DataFrame:
    """One row per qualified result: ``result_pos, lab_qc_qualifier, lab_qc_elements,
    lab_qc_reasons, nondetect_limit_ug_L``.

    The per-result work is a group-by over the qualified results only (a small share of a
    large table); each distinct set of qualifiers is combined once.
    """
    if links.empty:
        return pd.DataFrame({"result_pos": pd.Series(dtype="int64"), "lab_qc_qualifier": pd.Series(dtype=object),
                             "lab_qc_elements": pd.Series(dtype=object), "lab_qc_reasons": pd.Series(dtype=object),
                             "nondetect_limit_ug_L": pd.Series(dtype=float)})
    g = links.groupby("result_pos", sort=True)
    quals = g["qualifier"].agg(lambda s: "|".join(sorted(set(s))))
    det = np.asarray(detected, dtype=bool)[quals.index.to_numpy()]
    keys = pd.Series(quals.to_numpy() + np.where(det, "#d", "#n"))
    uniq = {k: combine_one(k.split("#")[0].split("|"), k.endswith("#d")) for k in keys.unique()}
    text = links["element"] + " " + links["qualifier"] + ": " + links["rule"]
    return pd.DataFrame({
        "result_pos": quals.index.to_numpy(),
        "lab_qc_qualifier": keys.map(uniq).to_numpy(),
        "lab_qc_elements": g["element"].agg(lambda s: ";".join(dict.fromkeys(s))).to_numpy(),
        "lab_qc_reasons": text.groupby(links["result_pos"], sort=True).agg(lambda s: " | ".join(dict.fromkeys(s))).to_numpy(),
        "nondetect_limit_ug_L": g["nondetect_limit_ug_L"].max().to_numpy(),
    })
