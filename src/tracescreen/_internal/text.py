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
