"""Result cells and their limits: detected value, or non-detect with its censoring level.

A result is read from its cell, its qualifier, remark and detection-condition columns (each with
its own vocabulary, :mod:`tracescreen.io.qualifiers`) and the limits reported with it:

* a **detection limit** and a **quantitation (reporting) limit**, each a column of its own with an
  optional unit column (``detection_limit``, ``quantitation_limit``);
* **reported limits** with their type: WQX ``DetectionQuantitationLimitTypeName`` with its value and
  unit, the USGS Samples ``DetectionLimit_TypeA``/``B``, NWIS ``rpt_lev_cd`` with ``rpt_lev_va``, a
  lab's ``LIMIT_DEFINITION`` with ``REPDL``. The type is classified by ``data/limit_types.yaml``
  (detection, quantitation, censoring, upper, other).

Result cells (common laboratory reporting practice):

* a number: detected (``1.2``, ``1.2E-3``); qualifier ``J``: detected, estimated;
* ``<x``: not detected at ``x``; ``ND``, ``not detected``, ``BDL``, ``<DL`` ... or a blank cell
  with a non-detect qualifier (``U``, remark ``<``, "Not Detected"): not detected at the
  censoring level below;
* a number with a non-detect qualifier (``0.5`` + ``U``): not detected at that number, unless a
  limit is reported with it;
* ``>x`` or a number qualified above the range: "at least x" (meaning ``above_range``); an empty
  cell qualified above the range takes an upper limit reported with it;
* a detected result of exactly 0 (the "none found" convention of old records): a non-detect at
  its limit, set aside where none is given.

The **censoring level** of a non-detect is, in order: the number in ``<x``; the limit reported
with the result (a censoring level, a detection limit, an untyped limit, a quantitation limit);
the detection-limit column; the quantitation-limit column. A detected value below the
quantitation limit is *detected, estimated* (meaning ``detected_estimated`` added). A result
reported as detected but not quantified (no number, "Detected Not Quantified") with a
quantitation limit is below that limit: it is censored at it, and keeps ``detected_estimated``.

Everything here works on the distinct combinations the loader passes (never per row); all limits
are returned in the result's own unit.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from tracescreen.io import codelists, qualifiers
from tracescreen.io.cells import to_number

ND_WORDS = frozenset({
    "nd", "n.d.", "n.d", "notdetected", "not detected", "bdl", "belowdetectionlimit",
    "below detection limit", "<dl", "<lor", "<mdl", "<rl", "<lod", "<loq", "<pql", "u",
})

_NUM = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_LT_RE = re.compile(rf"^<\s*=?\s*({_NUM})$")
_GT_RE = re.compile(rf"^>\s*=?\s*({_NUM})$")
_NUM_QUAL_RE = re.compile(rf"^({_NUM})\s*([A-Za-z]{{1,3}})$")


@dataclass
class Limits:
    """The limits of each combination, in the result's unit (NaN where not given).

    ``censor`` is the limit reported with the result, else the detection-limit column (the level a
    non-detect is censored at when its cell has no ``<x``; the quantitation limit is the last
    resort); ``detection`` the detection limit of a detected result; ``quantitation`` the
    quantitation limit;
    ``upper`` an upper limit of the range; ``error`` a reason text where a limit cell is unusable.
    """

    censor: np.ndarray
    detection: np.ndarray
    quantitation: np.ndarray
    upper: np.ndarray
    error: np.ndarray

    @classmethod
    def none(cls, n: int) -> Limits:
        """No censoring limits for ``n`` rows."""
        nan = np.full(n, np.nan)
        return cls(nan, nan.copy(), nan.copy(), nan.copy(), np.full(n, None, dtype=object))


def _first(*arrays: np.ndarray) -> np.ndarray:
    out = arrays[0].copy()
    for a in arrays[1:]:
        out = np.where(np.isnan(out), a, out)
    return out


def resolve_limits(numbers: dict[str, pd.Series], factors: dict[str, np.ndarray], types: dict[str, np.ndarray],
                   row_factor: np.ndarray, decimal_comma: bool = False) -> Limits:
    """Limits of each combination in the result's unit.

    Parameters
    ----------
    numbers : dict of str -> Series of text
        ``detection``, ``quantitation``, ``reported``, ``reported_2``: the limit cells.
    factors : dict of str -> float array
        The factor to µg/L of each limit's own unit (NaN where it has none: the result's unit).
    types : dict of str -> object array
        ``reported``, ``reported_2``: the class of each limit's type (:func:`limit_classes`).
    row_factor : float array
        Factor to µg/L of the result's unit.
    """
    n = len(row_factor)
    error = np.full(n, None, dtype=object)
    values = {}
    for name, text in numbers.items():
        t = text.fillna("").astype(str).str.strip()
        num = to_number(t, decimal_comma).to_numpy(dtype=float, copy=True)
        bad = (t != "").to_numpy() & (np.isnan(num) | (num < 0))
        label = {"detection": "detection limit", "quantitation": "quantitation limit"}.get(name, "reported limit")
        msg = (label + " '" + t[bad] + "' is not a non-negative number").to_numpy(dtype=object)
        error[bad] = np.where(pd.isna(error[bad]).astype(bool), msg, error[bad])
        num[bad] = np.nan
        f = factors.get(name, np.full(n, np.nan))
        values[name] = num * np.where(np.isnan(f), row_factor, f) / row_factor
    cls = types

    def of(kind: str) -> np.ndarray:
        got = [np.where(cls[k] == kind, values[k], np.nan) for k in ("reported", "reported_2") if k in cls]
        return _first(*got) if got else np.full(n, np.nan)

    untyped = _first(*[np.where(cls[k] == "", values[k], np.nan) for k in ("reported", "reported_2") if k in cls]) \
        if cls else np.full(n, np.nan)
    det_col, q_col = values.get("detection", np.full(n, np.nan)), values.get("quantitation", np.full(n, np.nan))
    reported = _first(of("censoring"), of("detection"), untyped, of("quantitation"))
    return Limits(censor=_first(reported, det_col), detection=_first(det_col, of("detection"), untyped),
                  quantitation=_first(q_col, of("quantitation")), upper=of("upper"), error=error)


def limit_classes(values, namespaces: tuple[str, ...] = ("wqx", "nwis", "lab")) -> np.ndarray:
    """The class of each distinct limit-type text (``data/limit_types.yaml``; ``""`` if unknown)."""
    return codelists.classify(values, "limit_types", namespaces)


def _add_meaning(meaning: np.ndarray, mask: np.ndarray, word: str) -> None:
    cur = meaning[mask]
    meaning[mask] = np.where(cur == "", word, np.where(pd.Series(cur, dtype=object).str.contains(word, regex=False),
                                                       cur, cur + ";" + word))


def parse_results(result: pd.Series, qualifier: pd.Series, limits: Limits, decimal_comma: bool = False,
                  remark: pd.Series | None = None, condition: pd.Series | None = None,
                  value_qualifier: pd.Series | None = None) -> dict[str, np.ndarray]:
    """Parse result cells into value, detected flag and censoring level (all in the row's unit).

    Parameters
    ----------
    result, qualifier : pandas.Series of str
        The cells as reported ("" where empty), one per distinct combination.
    limits : Limits
        The limits of the same combinations (:func:`resolve_limits`).
    decimal_comma : bool
        Read ``,`` as the decimal separator.
    remark, condition, value_qualifier : pandas.Series of str, optional
        An NWIS remark column (``remark_cd``), a WQX detection-condition column and an NWIS
        value-qualifier column (``val_qual_tx``), each read with its own vocabulary.

    Returns
    -------
    dict of numpy arrays
        ``value`` (float, NaN for non-detects), ``detected`` (bool), ``detection_limit`` (float:
        the censoring level of a non-detect, the detection limit of a detected result),
        ``quantitation_limit`` (float), ``error`` (object: None or why the cell cannot be used),
        ``set_aside`` (object: None or why a usable cell is not a result to screen, e.g. qualifier
        R), ``meaning`` (object: the qualifier meanings, ``;``-joined, with ``unknown:CODE`` for
        codes in no vocabulary).
    """
    n = len(result)
    res = result.fillna("").astype(str).str.strip()
    read = [qualifiers.read_column(qualifier.fillna("").astype(str), "qualifier")]
    for col, kind in ((remark, "remark_code"), (condition, "detection_condition"), (value_qualifier, "value_qualifier")):
        if col is not None:
            read.append(qualifiers.read_column(col.fillna("").astype(str), kind))
    meaning = qualifiers.combine(*read).to_numpy(dtype=object)
    unknown_codes = qualifiers.combine(*[pd.DataFrame({"meanings": r["unknown"]}) for r in read]).to_numpy(dtype=object)

    value = to_number(res, decimal_comma).to_numpy(dtype=float, copy=True)
    error = limits.error.copy()
    qual_u = qualifiers.has_meaning(meaning, qualifiers.NONDETECT_MEANINGS).copy()
    detected = ~np.isnan(value)
    lt_val = np.full(n, np.nan)

    todo = np.isnan(value)  # everything that is not a plain number is looked at here
    if todo.any():
        # each distinct text once ("<0.5" repeats thousands of times), then broadcast
        codes, uniq = pd.factorize(res[todo])
        u = pd.Series(np.asarray(uniq, dtype=object), dtype=object)
        u_c = u.str.replace(",", ".", regex=False) if decimal_comma else u
        lt = pd.to_numeric(u_c.str.extract(_LT_RE, expand=False), errors="coerce").to_numpy(dtype=float)[codes]
        gt = pd.to_numeric(u_c.str.extract(_GT_RE, expand=False), errors="coerce").to_numpy(dtype=float)[codes]
        numq = u_c.str.extract(_NUM_QUAL_RE, expand=True)
        nq_val = pd.to_numeric(numq[0], errors="coerce").to_numpy(dtype=float)[codes]
        nq_read = qualifiers.read_column(numq[1].fillna("").astype(str), "qualifier")
        nq_meaning = nq_read["meanings"].to_numpy(dtype=object)[codes]
        is_nd_word = u.str.lower().str.replace(r"\s+", " ", regex=True).isin(ND_WORDS).to_numpy()[codes]
        is_blank = (u == "").to_numpy()[codes]
        sub = u.iloc[codes].to_numpy(dtype=object)
        idx = np.flatnonzero(todo)

        lt_ok, gt_ok, nq_ok = ~np.isnan(lt), ~np.isnan(gt), ~np.isnan(nq_val)
        lt_val[idx[lt_ok]] = lt[lt_ok]  # "<x": not detected at x
        # ">x": above the calibrated or reported range, kept as "at least x"; screening decides
        value[idx[gt_ok]], detected[idx[gt_ok]] = gt[gt_ok], True
        _add_meaning(meaning, idx[gt_ok], "above_range")
        # "0.5 U" / "1.2 J": a number followed by qualifier letters
        add = nq_ok & (nq_meaning != "")
        cur = meaning[idx[add]]
        meaning[idx[add]] = np.where(cur == "", nq_meaning[add], cur + ";" + nq_meaning[add])
        nq_u = nq_ok & qualifiers.has_meaning(nq_meaning, qualifiers.NONDETECT_MEANINGS)
        value[idx[nq_ok]], detected[idx[nq_ok]] = nq_val[nq_ok], True
        qual_u[idx[nq_u]] = True

        blank = idx[is_blank]
        # an empty cell: above the range with an upper limit -> at least that limit; detected, not
        # quantified, with a quantitation limit -> below that limit (censored at it)
        above = qualifiers.has_meaning(meaning[blank], {"above_range"}) & ~np.isnan(limits.upper[blank])
        value[blank[above]], detected[blank[above]] = limits.upper[blank[above]], True
        est = ~above & ~qual_u[blank] & qualifiers.has_meaning(meaning[blank], {"detected_estimated"}) \
            & ~np.isnan(limits.quantitation[blank])
        lt_val[blank[est]] = limits.quantitation[blank[est]]
        nd_cell_t = is_nd_word | (is_blank & qual_u[idx])
        lt_val[idx[nd_cell_t]] = _first(limits.censor[idx[nd_cell_t]], limits.quantitation[idx[nd_cell_t]])
        unknown = ~(lt_ok | gt_ok | nq_ok | nd_cell_t) & ~np.isin(idx, blank[above | est])
        est_blank = qualifiers.has_meaning(meaning[idx], {"detected_estimated"})
        error[idx[unknown & is_blank & ~est_blank]] = \
            "result is empty (and no non-detect qualifier or detection condition)"
        error[idx[unknown & is_blank & est_blank]] = \
            "result is empty: detected but not quantified, and no quantitation limit is given to bound it"
        other = unknown & ~is_blank
        error[idx[other]] = ("result '" + pd.Series(sub[other], dtype=object) +
                             "' is not a number, '<x' or a non-detect code").to_numpy(dtype=object)

    nd_cell = np.zeros(n, dtype=bool)
    if todo.any():
        nd_cell[idx[nd_cell_t]] = True
    dl = lt_val.copy()
    # A detected 0 is the "none found" convention of old records, not a measured zero: with a
    # limit it is a non-detect at that limit; without one it is set aside (README).
    zero = detected & (value == 0) & ~qual_u
    zero_limit = _first(limits.censor, limits.quantitation)
    dl = np.where(zero, zero_limit, dl)
    qual_u |= zero & ~np.isnan(zero_limit)
    zero_no_limit = zero & np.isnan(zero_limit)
    # a number with a non-detect qualifier: not detected at a reported limit, else at that number
    num_u = detected & qual_u & ~zero
    dl = np.where(num_u, _first(limits.censor, value), dl)
    detected &= ~qual_u
    detected[~np.isnan(lt_val) | nd_cell] = False
    value[~detected] = np.nan
    # a detected value below the quantitation limit is an estimate
    below_q = detected & (value < limits.quantitation) & \
        ~qualifiers.has_meaning(meaning, qualifiers.ESTIMATED_MEANINGS | {"above_range"})
    _add_meaning(meaning, below_q, "detected_estimated")

    ok = pd.isna(error).astype(bool)
    rejected = qualifiers.has_meaning(meaning, {"rejected"}) & ok
    set_aside = np.full(n, None, dtype=object)
    set_aside[rejected] = "result qualified as unusable (rejected by the laboratory or data review)"
    zero_aside = zero_no_limit & ~rejected & ok
    set_aside[zero_aside] = ("result 0 reported as detected: the old 'none found' convention, a non-detect "
                             "whose detection limit is not given")
    value[zero_aside], detected[zero_aside] = np.nan, False

    ok = pd.isna(error).astype(bool)
    error[~detected & np.isnan(dl) & ok & ~zero_aside] = \
        "non-detect without a detection limit (no '<x', no limit column, no limit reported with the result)"
    neg = (value < 0) | (dl < 0)
    error[neg & pd.isna(error).astype(bool)] = "negative concentration or detection limit"
    error[~detected & (dl == 0) & pd.isna(error).astype(bool)] = "non-detect with a detection limit of zero"
    has_unknown = unknown_codes != ""
    unk = np.where(has_unknown, "unknown:" + pd.Series(unknown_codes, dtype=object).str.replace(
        ";", ";unknown:", regex=False).to_numpy(dtype=object), "")
    meaning = np.where(has_unknown, np.where(meaning == "", unk, meaning + ";" + unk), meaning)
    detection = np.where(detected, _first(limits.detection, limits.quantitation), dl)
    return {"value": value, "detected": detected, "detection_limit": detection,
            "quantitation_limit": limits.quantitation, "error": error, "meaning": meaning, "set_aside": set_aside}
