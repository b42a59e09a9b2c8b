"""Deciding across fractions: total >= dissolved.

The dissolved fraction of a metal is the part that passes a 0.45 µm filter; the total
(recoverable) fraction includes it, so for one sample total >= dissolved (common practice; the
retest check ``dissolved_exceeds_total`` flags samples where a laboratory reports otherwise). Hence:

* a **dissolved result above a total-fraction limit** exceeds it: the total is at least as high;
* a **total result at or below a dissolved criterion** meets it: the dissolved is at most as high
  (a total non-detect whose detection limit is at or below the criterion, ``nondetect_meets``).

Any other cross-fraction comparison decides nothing and gives no row. A cross-fraction pair is
made only where the sample has no result of the limit's own fraction for that analyte (that
result is screened directly) and only for single-sample limits (period rules pool results of the
entry's own fraction). Rows decided so carry ``limit_fraction`` (the entry's fraction, different
from the result's) and a note. :func:`tracescreen.screening.screen.screen` makes these pairs
unless ``cross_fraction=False``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import STATUS_CODE

_SWAP = {"dissolved": "total", "total": "dissolved"}

#: Notes of rows decided across fractions, by the entry's fraction.
CROSS_NOTES = {
    "total": "decided from the dissolved result: total >= dissolved, so a dissolved value above a total limit exceeds it",
    "dissolved": "decided from the total result: dissolved <= total, so a total value within a dissolved criterion meets it",
}


def _text_codes(values: pd.Series, with_text: bool = True) -> tuple[np.ndarray, pd.Index | None]:
    """Integer codes of a column's text (``str`` of each value; a missing value is a code of its own),
    and the distinct texts: a categorical is coded through its categories, never row by row.
    ``with_text=False``: the codes alone (the texts may be None; a categorical of text categories is not
    converted: a part of a large run holds the whole run's categories)."""
    if not isinstance(values.dtype, pd.CategoricalDtype):
        codes, uniq = pd.factorize(values.astype(str), use_na_sentinel=False)
        return codes, pd.Index(uniq, dtype=object)
    cats = values.cat.categories
    codes = values.cat.codes.to_numpy().astype(np.int64)
    if not with_text and isinstance(cats.dtype, pd.StringDtype):  # distinct categories are distinct texts
        return np.where(codes < 0, len(cats), codes), None
    if isinstance(cats.dtype, pd.StringDtype) or cats.inferred_type == "string":
        recode, text = np.arange(len(cats)), pd.Index(np.asarray(cats, dtype=object), dtype=object)
    else:  # other categories (numbers): distinct values may share a text (1 and "1")
        recode, text = pd.factorize(pd.Index(cats.astype(str)))
        text = pd.Index(np.asarray(text, dtype=object), dtype=object)
    if (codes < 0).any():
        return np.where(codes < 0, len(text), recode[np.maximum(codes, 0)]), text.append(pd.Index([None], dtype=object))
    return recode[codes], text


def other_fractions(texts) -> list:
    """The other fraction of each fraction text (total <-> dissolved; other texts kept)."""
    return [_SWAP.get(t, t) for t in texts]


def swapped(results: pd.DataFrame) -> pd.DataFrame:
    """The results with total and dissolved swapped (other fractions kept), to find the entries of
    the other fraction with :func:`tracescreen.screening.applicability.applicable_pairs`.

    The swapped fraction is a categorical (a categorical's categories are renamed: no text per row)."""
    frac = results["fraction"]
    if isinstance(frac.dtype, pd.CategoricalDtype):
        recode, text = pd.factorize(pd.Index(frac.cat.categories.astype(str)))
        codes = frac.cat.codes.to_numpy()
        new = np.where(codes < 0, -1, recode[codes] if len(recode) else codes)  # missing stays missing
        return results.assign(fraction=pd.Categorical.from_codes(new, categories=other_fractions(text)))
    text = frac.astype(str)
    return results.assign(fraction=pd.Categorical(text.map(_SWAP).fillna(text)))


def lacks_other_fraction(results: pd.DataFrame) -> np.ndarray:
    """True where the same site, sample and analyte has no result of the other fraction.

    Compared on integer codes of the texts (one joint code per site, sample, analyte and fraction)."""
    from tracescreen._internal.coded import nested_codes

    key = [_text_codes(results[c], with_text=False)[0] for c in ("site_id", "sample_id", "analyte")]
    f_codes, f_text = _text_codes(results["fraction"])
    other_of = pd.Index(f_text).get_indexer(other_fractions(f_text))  # -1: the other fraction has no result
    f_other = other_of[f_codes]
    has_other = f_other >= 0
    if not has_other.any():
        return np.ones(len(results), dtype=bool)
    n_f = len(f_text)
    site, sample, analyte = key
    joint = nested_codes(site, sample)[0] * (int(analyte.max()) + 1) + analyte  # (site, sample, analyte)
    own = joint.astype(np.int64) * n_f + f_codes
    other = joint.astype(np.int64) * n_f + f_other
    seen = np.zeros(int(own.max()) + 1 + n_f, dtype=bool)  # the (site, sample, analyte, fraction) keys present
    seen[own] = True
    out = np.ones(len(results), dtype=bool)
    out[has_other] = ~seen[other[has_other]]
    return out


def deciding(status: np.ndarray, entry_fraction: np.ndarray) -> np.ndarray:
    """Which cross-fraction pairs decide (by their status as if the fractions were the same)."""
    to_total = entry_fraction == "total"  # a dissolved result against a total limit
    exceeds = status == STATUS_CODE["exceeds"]
    meets = (status == STATUS_CODE["meets"]) | (status == STATUS_CODE["nondetect_meets"])
    return np.where(to_total, exceeds, meets)
