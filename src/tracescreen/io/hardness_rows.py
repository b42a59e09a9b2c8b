"""Hardness reported as its own result row becomes the hardness of the sample's metal results.

Portal downloads and lab deliverables report hardness as a result row of its own (WQX
``CharacteristicName`` "Hardness, Ca, Mg", NWIS parameter 00900 "Hardness, water", a lab's
"Total Hardness as CaCO3"), in mg/L as CaCO3, beside the metals of the same sample. Such a row is
not a result to screen; its value is the hardness [mg/L as CaCO3] that hardness-dependent
criteria need (40 CFR 131.36(b)(2)). :func:`hardness_of_samples` spreads it to the rows of the
same site and sample id (within one file sheet); a row's own ``hardness_mg_L`` column wins.

The names are data (``data/analytes.yaml``, ``hardness_names``, each with its source).
"""

from __future__ import annotations

import functools
import re
from importlib import resources

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import parse_yaml


def _key(text: str) -> str:
    return re.sub(r"[\s,;:_\-./()]+", "", str(text).strip().lower())


@functools.lru_cache(maxsize=1)
def hardness_names() -> frozenset[str]:
    """Matching keys of the total-hardness names of ``data/analytes.yaml``."""
    text = resources.files("tracescreen").joinpath("data/analytes.yaml").read_text("utf-8")
    return frozenset(_key(n) for n in parse_yaml(text, "analytes.yaml")["hardness_names"])


def is_hardness_name(labels: pd.Series) -> np.ndarray:
    """True where an analyte label names total hardness (one test per distinct label)."""
    codes, uniq = pd.factorize(labels.fillna("").astype(str))
    names = hardness_names()
    hit = np.array([_key(u) in names for u in uniq], dtype=bool)
    return hit[codes] if len(uniq) else np.zeros(len(labels), dtype=bool)


def hardness_of_samples(sample_code: np.ndarray, is_hardness: np.ndarray, hardness_mg_L: np.ndarray) -> np.ndarray:
    """Hardness [mg/L as CaCO3] of each row's sample from its hardness rows (NaN where none).

    Parameters
    ----------
    sample_code : int array
        One code per (site, sample id) of each row.
    is_hardness : bool array
        Rows that are usable hardness results (detected, a number, a mass-per-volume unit).
    hardness_mg_L : float array
        Their value [mg/L as CaCO3]; ignored on other rows.

    Returns
    -------
    float array aligned with the rows; where a sample has several hardness rows, the mean.
    """
    n_s = int(sample_code.max()) + 1 if len(sample_code) else 0
    total = np.zeros(n_s)
    count = np.zeros(n_s)
    m = is_hardness & ~np.isnan(hardness_mg_L)
    np.add.at(total, sample_code[m], hardness_mg_L[m])
    np.add.at(count, sample_code[m], 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        per_sample = np.where(count > 0, total / count, np.nan)
    return per_sample[sample_code] if len(sample_code) else np.zeros(0)
