"""Numbers, dates and notes as text, the same way in retest details, statistics notes, the report and the dashboard."""

from __future__ import annotations

import numpy as np
import pandas as pd


def format_number(values, digits: int = 4) -> pd.Series:
    """Format numbers with ``digits`` significant figures, vectorised; NaN becomes ``""``.

    Examples
    --------
    >>> format_number([0.123456, 123456.0, 2.0, float("nan")]).tolist()
    ['0.1235', '123500', '2', '']

    Parameters
    ----------
    values : array-like of float
    digits : int
        Significant figures.

    Returns
    -------
    pandas.Series of str
    """
    index = values.index if isinstance(values, pd.Series) else None
    v = np.asarray(values, dtype=float)
    if v.ndim == 1 and len(v) > 64:  # each distinct number formatted once (limits repeat, results often)
        codes, distinct = pd.factorize(v, use_na_sentinel=False)
        if len(distinct) < len(v):
            return pd.Series(format_number(distinct, digits).to_numpy()[codes], index=index, dtype=object)
    out = np.full(v.shape, np.nan)
    ok = np.isfinite(v) & (v != 0)
    mag = np.zeros(v.shape)
    mag[ok] = np.floor(np.log10(np.abs(v[ok])))
    k = mag - digits + 1  # round to a multiple of 10**k
    neg = ok & (k < 0)
    pos = ok & (k >= 0)
    out[neg] = np.round(v[neg] * 10.0 ** -k[neg]) / 10.0 ** -k[neg]
    out[pos] = np.round(v[pos] / 10.0 ** k[pos]) * 10.0 ** k[pos]
    out[v == 0] = 0.0
    text = pd.Series(out, index=index).astype(str).str.replace(r"\.0$", "", regex=True)
    return text.where(np.isfinite(out), "").astype(object)


def format_date(values) -> pd.Series:
    """ISO date (``YYYY-MM-DD``) of datetimes, vectorised; NaT becomes ``""``."""
    s = pd.to_datetime(values if isinstance(values, pd.Series) else pd.Series(values))
    return s.dt.strftime("%Y-%m-%d").fillna("").astype(object)


def join_notes(parts: list[tuple[np.ndarray, pd.Series | str]], size: int) -> np.ndarray:
    """Per row, join with "; " the messages whose condition holds (``parts``: (condition, text))."""
    out = pd.Series([""] * size, dtype=object)
    for cond, text in parts:
        cond = np.asarray(cond, bool)
        if not cond.any():
            continue
        msg = text if isinstance(text, pd.Series) else pd.Series([text] * size)
        add = cond & (out != "").to_numpy()
        out = out.where(~add, out + "; ")
        out = out.where(~cond, out + msg.astype(str))
    return out.to_numpy(dtype=object)


_NUMBER = r"^[<>≤≥=~\s]*[-+]?(\d*)\.?(\d*)(?:[eE][-+]?\d+)?"


def significant_figures(texts) -> np.ndarray:
    """Significant figures of numbers as written (``"0.0572"`` has 3, ``"10.0"`` 3, ``"<0.50"`` 2),
    vectorised over the distinct texts; 0 where a text holds no number.

    Trailing zeros of a whole number without a decimal point are not counted (``"100"`` has 1),
    as in common practice.

    Examples
    --------
    >>> significant_figures(["0.0572", "10.0", "<0.50", "100", "1.20E-3", "n/a"]).tolist()
    [3, 3, 2, 1, 3, 0]
    """
    s = pd.Series(texts, dtype=object).fillna("").astype(str)
    codes, uniq = pd.factorize(s)
    parts = pd.Series(uniq, dtype=object).str.extract(_NUMBER)
    whole, frac = parts[0].fillna(""), parts[1].fillna("")
    has_point = pd.Series(uniq, dtype=object).str.contains(r"\d\.|\.\d", regex=True)
    digits = (whole + frac).str.lstrip("0")
    digits = digits.where(has_point | (frac != ""), digits.str.rstrip("0"))
    counts = digits.str.len().to_numpy(dtype=int)
    counts = np.where((whole + frac).str.contains(r"[1-9]"), counts, np.where((whole + frac) != "", 1, 0))
    return counts[codes] if len(codes) else np.zeros(0, dtype=int)


def format_significant(values, digits) -> pd.Series:
    """Numbers to ``digits`` significant figures keeping trailing zeros (10 to 3 figures is ``"10.0"``),
    vectorised (one ``%f`` format per distinct count of decimals); NaN becomes ``""``.

    Examples
    --------
    >>> format_significant([57.2, 10.0, 0.5, 12345.0, float("nan")], [3, 3, 2, 3, 3]).tolist()
    ['57.2', '10.0', '0.50', '12300', '']
    """
    index = values.index if isinstance(values, pd.Series) else None
    v = np.asarray(values, dtype=float)
    d = np.broadcast_to(np.asarray(digits, dtype=int), v.shape).clip(1, 15)
    out = np.full(v.shape, "", dtype=object)
    ok = np.isfinite(v)
    mag = np.zeros(v.shape)
    nz = ok & (v != 0)
    mag[nz] = np.floor(np.log10(np.abs(v[nz])))
    decimals = np.where(ok, d - 1 - mag, 0).astype(int)
    big = ok & (decimals < 0)  # rounded to tens, hundreds ...
    rounded = v.copy()
    rounded[big] = np.round(v[big] / 10.0 ** -decimals[big]) * 10.0 ** -decimals[big]
    decimals = decimals.clip(0, 15)
    for k in np.unique(decimals[ok]):
        m = ok & (decimals == k)
        out[m] = np.char.mod(f"%.{k}f", rounded[m])
    return pd.Series(out, index=index, dtype=object)
