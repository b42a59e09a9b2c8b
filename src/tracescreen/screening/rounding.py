"""Rounding a result to the limit's significant figures before the comparison (a table setting).

Tables with ``rounding: significant_figures`` compare the result rounded to the limit's number of
significant figures, as some regulators do ("0.0104 mg/L reported against an MCL of 0.010 mg/L is
0.010 and meets it"). Rounding is to the decimal place of the limit's last significant digit,
halves rounded up; for a result of the limit's order of magnitude this is the same as rounding the
result to the limit's significant figures, and for any other result the decision is the same. The
number of significant figures is the entry's ``significant_figures`` key, or counted from the value
as written in the table (``0.010`` has 2, ``10`` has 2, ``0.01`` has 1). For a hardness-formula
entry the computed criterion is rounded to ``significant_figures`` too (published criteria are
rounded to two significant figures, [CFR40-132]_ Tables 1-2 footnote b).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from tracescreen._internal.frames import replace_at
from tracescreen.limits.evaluate import is_formula
from tracescreen.screening.status import classify

_NUMBER = re.compile(r"^[+-]?(\d*)(?:\.(\d*))?(?:[eE][+-]?\d+)?$")


def significant_figures(text) -> float:
    """Significant figures of a number as written (NaN if the text is not a plain number).

    Leading zeros are not significant; every digit after the first non-zero one is, including
    trailing zeros (``0.010`` -> 2, ``50`` -> 2, ``1.30`` -> 3, ``2`` -> 1, ``1e-3`` -> 1).
    """
    if text is None:
        return np.nan
    m = _NUMBER.match(str(text).strip())
    if not m or not (m.group(1) or m.group(2)):
        return np.nan
    digits = (m.group(1) or "") + (m.group(2) or "")
    stripped = digits.lstrip("0")
    return float(len(stripped)) if stripped else 1.0


def _half_up(x: np.ndarray) -> np.ndarray:
    # round(., 9) first so that 10.499999999999998 (binary for 10.5) rounds as 10.5 does
    return np.floor(np.round(x, 9) + 0.5)


def round_to_limit_figures(value_ug_L, limit_ug_L, sig_figs) -> np.ndarray:
    """Round results to the decimal place of the limit's last significant digit (halves up).

    Parameters
    ----------
    value_ug_L : array-like
        Results (or detection limits) [µg/L], >= 0.
    limit_ug_L : array-like
        Limits [µg/L], > 0.
    sig_figs : array-like
        Significant figures of each limit; NaN leaves the value unrounded.

    Returns
    -------
    numpy.ndarray
        Rounded values [µg/L].
    """
    v = np.asarray(value_ug_L, dtype=float)
    lim = np.asarray(limit_ug_L, dtype=float)
    s = np.asarray(sig_figs, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        exponent = np.floor(np.log10(lim * (1 + 1e-12))) - s + 1
        quantum = 10.0 ** exponent
        rounded = _half_up(v / quantum) * quantum
    return np.where(np.isfinite(rounded) & (lim > 0), rounded, v)


def round_significant(x, sig_figs) -> np.ndarray:
    """Round to `sig_figs` significant figures, halves up (NaN sig_figs leaves x as is)."""
    x = np.asarray(x, dtype=float)
    return round_to_limit_figures(x, x, sig_figs)


def table_rounding(tables: pd.DataFrame) -> dict[str, bool]:
    """table_id -> whether the table's settings ask for rounding to significant figures."""
    return {t: (s or {}).get("rounding", "none") == "significant_figures"
            for t, s in zip(tables["table_id"], tables["settings"])}


def entry_significant_figures(entries: pd.DataFrame) -> np.ndarray:
    """Significant figures per entry: the ``significant_figures`` key, else counted from the value text."""
    n = len(entries)
    given = entries["significant_figures"].to_numpy(dtype=float) if "significant_figures" in entries else np.full(n, np.nan)
    text = entries["value_text"] if "value_text" in entries else pd.Series([None] * n)
    counted = np.array([significant_figures(t) for t in text], dtype=float)  # one per table entry
    return np.where(np.isnan(given), counted, given)


def apply_rounding(screened: pd.DataFrame, limits) -> pd.DataFrame:
    """Re-decide single-sample rows of tables with ``rounding: significant_figures``.

    Adds ``compared_value_ug_L`` (the rounded result, or detection limit for a non-detect) where
    rounding applies; formula criteria of those tables are rounded to the entry's significant
    figures first. Other rows are unchanged.
    """
    rounding = table_rounding(limits.tables)
    out = screened
    if "compared_value_ug_L" not in out:
        out = out.assign(compared_value_ug_L=np.nan)
    on = (out["limit_table"].isin([t for t, r in rounding.items() if r]).to_numpy()
          & (out["basis"] == "single_sample").to_numpy() & out["limit_ug_L"].notna().to_numpy())
    if not on.any():
        return out
    sig = pd.Series(entry_significant_figures(limits.entries), index=limits.entries["entry_id"])
    idx = np.flatnonzero(on)
    rows = out.iloc[idx]
    s = sig.reindex(rows["entry_id"]).to_numpy(dtype=float)
    computed = pd.Series(is_formula(limits.entries), index=limits.entries["entry_id"])  # formula or form
    formula = computed.reindex(rows["entry_id"]).fillna(False).to_numpy(dtype=bool)
    limit = rows["limit_ug_L"].to_numpy(dtype=float)
    limit = np.where(formula, round_significant(limit, s), limit)
    det = rows["detected"].to_numpy(dtype=bool)
    raw = np.where(det, rows["value_ug_L"].to_numpy(float), rows["detection_limit_ug_L"].to_numpy(float))
    cmp = round_to_limit_figures(raw, limit, s)
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = cmp / limit
    note = rows["note"].astype(str).to_numpy(dtype=object)
    msg = np.where(np.isnan(s), "", "compared after rounding to " + pd.Series(s).fillna(0).astype(int).astype(str).to_numpy()
                   + " significant figures").astype(object)
    note = np.where(note == "", msg, np.where(msg == "", note, note + "; " + msg))
    return out.assign(
        limit_ug_L=replace_at(out["limit_ug_L"], idx, limit),
        compared_value_ug_L=replace_at(out["compared_value_ug_L"], idx, cmp),
        status=replace_at(out["status"], idx, classify(det, cmp, cmp, limit)),
        ratio=replace_at(out["ratio"], idx, ratio),
        note=replace_at(out["note"], idx, note),
    )
