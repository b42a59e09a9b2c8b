"""Limits computed for (result, entry) pairs: fixed values, the US EPA hardness formula, and the forms
of :mod:`tracescreen.limits.forms`, each evaluated once per entry, vectorised over its pairs."""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.limits import forms


def hardness_formula_limit(m, b, cf, cf_intercept, cf_ln_slope, hardness_mg_L, hardness_min=np.nan,
                           hardness_max=np.nan):
    """Hardness-dependent criterion, US EPA form.

    ``limit = exp(m·ln(H) + b) · CF``, where ``H`` is hardness clamped to ``[hardness_min,
    hardness_max]`` and ``CF`` is either a fixed conversion factor or ``intercept + ln_hardness·ln(H)``
    (the published form for cadmium and lead), never above 1.

    Parameters
    ----------
    m, b : array-like
        Slope and intercept of the published equation.
    cf : array-like
        Fixed conversion factor (NaN when the ln form is used).
    cf_intercept, cf_ln_slope : array-like
        Coefficients of the hardness-dependent conversion factor (NaN when fixed).
    hardness_mg_L : array-like
        Hardness [mg/L as CaCO3].
    hardness_min, hardness_max : array-like
        Bounds applied to hardness before the formula [mg/L as CaCO3] (NaN for none).

    Returns
    -------
    numpy.ndarray
        The criterion in the table's unit (µg/L for the US EPA tables); NaN where hardness is NaN.

    References
    ----------
    .. [1] US EPA (2024). National Recommended Water Quality Criteria - Aquatic Life Criteria Table,
       Appendix B: Parameters for calculating freshwater dissolved metals criteria that are
       hardness-dependent.
    .. [2] 40 CFR 131.38(b)(2), Table 1 and footnotes (conversion factors; CF for cadmium and lead
       not to exceed 1).
    """
    H = np.asarray(hardness_mg_L, dtype=float)
    lo = np.asarray(hardness_min, dtype=float)
    hi = np.asarray(hardness_max, dtype=float)
    H = np.where(np.isnan(lo), H, np.maximum(H, lo))
    H = np.where(np.isnan(hi), H, np.minimum(H, hi))
    with np.errstate(divide="ignore", invalid="ignore"):
        lnH = np.log(H)
        cf_ln = np.minimum(np.asarray(cf_intercept, dtype=float) + np.asarray(cf_ln_slope, dtype=float) * lnH, 1.0)
        factor = np.where(np.isnan(np.asarray(cf, dtype=float)), cf_ln, cf)
        return np.exp(np.asarray(m, dtype=float) * lnH + np.asarray(b, dtype=float)) * factor


def is_formula(entries: pd.DataFrame) -> np.ndarray:
    """True for entries whose limit is computed (the hardness formula or a form of limits/forms.py)."""
    hf = ~np.isnan(entries["hf_m"].to_numpy(dtype=float))
    if "form" not in entries:
        return hf
    return hf | entries["form"].notna().to_numpy(dtype=bool)


def evaluate(entries: pd.DataFrame, hardness_mg_L) -> np.ndarray:
    """Limit in µg/L for entries (aligned with ``hardness_mg_L``): fixed values or hardness-only forms."""
    n = len(entries)
    h = np.broadcast_to(np.asarray(hardness_mg_L, dtype=float), (n,))
    nan = np.full(n, np.nan)
    return evaluate_pairs(entries, np.arange(n), {"hardness": h, "ph": nan, "doc": nan, "temperature": nan})[0]


def evaluate_pairs(entries: pd.DataFrame, e_pos: np.ndarray,
                   inputs: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Limit in µg/L and form remark code (:data:`forms.REMARKS`) per (result, entry) pair.

    Parameters
    ----------
    entries : DataFrame
        ``LimitSet.entries``.
    e_pos : int array
        Entry position of each pair.
    inputs : dict
        Water chemistry of each pair (:data:`forms.INPUTS`: ``hardness`` [mg/L as CaCO3], ``ph``,
        ``doc`` [mg/L], ``temperature`` [°C]), NaN where unknown.

    Forms are evaluated once per distinct entry, vectorised over its pairs.
    """
    e_pos = np.asarray(e_pos, dtype=np.int64)
    n = len(e_pos)
    limit = entries["value_ug_L"].to_numpy(dtype=float)[e_pos]
    remark = np.zeros(n, dtype=np.int64)
    hf_entry = ~np.isnan(entries["hf_m"].to_numpy(dtype=float))
    hf = hf_entry[e_pos]
    if hf.any():
        e = e_pos[hf]

        def col(c):
            return entries[c].to_numpy(float)[e]

        limit[hf] = hardness_formula_limit(
            col("hf_m"), col("hf_b"), col("hf_cf"), col("hf_cf_intercept"), col("hf_cf_ln_slope"),
            np.asarray(inputs["hardness"], dtype=float)[hf], col("hardness_min"), col("hardness_max"),
        ) * col("unit_factor")
    if "form" in entries:
        spec = entries["form"].to_numpy(dtype=object)
        factor = entries["unit_factor"].to_numpy(float)
        sel = np.flatnonzero(pd.notna(spec)[e_pos]) if n else np.zeros(0, dtype=np.int64)
        order = sel[np.argsort(e_pos[sel], kind="stable")]  # pairs of each entry together, in input order
        for rows in np.split(order, np.flatnonzero(np.diff(e_pos[order])) + 1) if len(order) else []:
            k = e_pos[rows[0]]  # one evaluation per entry with a form, vectorised over its pairs
            s = spec[k]
            val, rem = forms.evaluate(s, {i: np.asarray(inputs[i], dtype=float)[rows] for i in s["inputs"]})
            limit[rows] = val * factor[k]
            remark[rows] = rem
    return limit, remark
