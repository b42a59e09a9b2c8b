"""What applies: every entry in force on a date, with its limit computed for given water chemistry.

This is the engine of the ``tracescreen limits`` command (and of anyone checking a table): for one
date, given inputs (hardness [mg/L as CaCO3], pH, DOC [mg/L], temperature [°C]) and site attributes
(``water_category=inland`` ...), one row per entry of the chosen tables that is in force and in
scope, with the computed value [µg/L], the limit in words, its basis, duration, scope and source.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.limits import forms, scope, words
from tracescreen.limits.evaluate import evaluate_pairs
from tracescreen.limits.load import LimitSet

IN_FORCE_COLUMNS = ["table_id", "analyte", "fraction", "duration", "basis", "scope", "limit_ug_L", "limit",
                    "remark", "effective_from", "effective_to", "note", "source"]


def round_criteria(limit: np.ndarray, e_pos: np.ndarray, entries: pd.DataFrame, tables: pd.DataFrame) -> np.ndarray:
    """Computed criteria rounded to their table's ``criteria_significant_figures`` where it sets one
    (40 CFR 131.38(b)(2): "Final CMC and CCC values should be rounded to two significant figures")."""
    from tracescreen.io.units import clean_decimal
    from tracescreen.screening.rounding import round_significant  # the rounding rule lives with screening

    figures = {t: (s or {}).get("criteria_significant_figures") for t, s in zip(tables["table_id"], tables["settings"])}
    if not any(figures.values()):
        return limit
    per_entry = entries["table_id"].map(figures).astype(float).to_numpy()
    return clean_decimal(round_significant(limit, per_entry[e_pos]))  # 0.94, not 0.9400000000000001


def entries_in_force(limits: LimitSet, on: str | pd.Timestamp, inputs: dict[str, float] | None = None,
                     site_attributes: dict[str, str] | None = None, tables: list[str] | None = None) -> pd.DataFrame:
    """Entries in force on ``on`` and in scope for ``site_attributes``, with limits for ``inputs``.

    Parameters
    ----------
    limits : LimitSet
    on : date
        The sampling date to look at.
    inputs : dict, optional
        ``hardness`` [mg/L as CaCO3], ``ph``, ``doc`` [mg/L], ``temperature`` [°C]; missing ones are unknown.
    site_attributes : dict, optional
        e.g. ``{"water_category": "inland"}``; attributes not given select every entry (or the table's
        ``default_scope``).
    tables : list of str, optional
        Table ids to show (default: all).

    Returns
    -------
    DataFrame with :data:`IN_FORCE_COLUMNS`; ``limit_ug_L`` NaN where it cannot be computed (``remark``
    says why).
    """
    e = limits.entries
    day = pd.Timestamp(on)
    keep = np.array((e["effective_from"].isna() | (e["effective_from"] <= day))
                    & (e["effective_to"].isna() | (e["effective_to"] >= day)), dtype=bool)
    if tables:
        unknown = sorted(set(tables) - set(limits.tables["table_id"]))
        if unknown:
            loaded = ", ".join(limits.tables["table_id"])
            raise ValueError(f"no limit table with id {', '.join(unknown)} (loaded: {loaded})")
        keep &= e["table_id"].isin(tables).to_numpy()
    site = pd.DataFrame([{"site_id": "_", **(site_attributes or {})}])
    pairs = pd.DataFrame({"site_id": "_", "_e": np.flatnonzero(keep)})
    pos = pairs["_e"].to_numpy()[scope.keep_pairs(pairs, e, limits.tables, site)]
    given = inputs or {}
    arrays = {k: np.full(len(pos), np.nan if given.get(k) is None else float(given[k])) for k in forms.INPUT_NAMES}
    limit, remark = evaluate_pairs(e, pos, arrays)
    limit = round_criteria(limit, pos, e, limits.tables)
    rows = e.iloc[pos]
    hf = ~np.isnan(rows["hf_m"].to_numpy(dtype=float))
    text = np.array([forms.REMARKS[r] for r in remark], dtype=object)
    text[hf & np.isnan(arrays["hardness"])] = "hardness unknown: limit not computed"
    names = limits.tables.set_index("table_id")["name"]
    units = limits.tables.set_index("table_id")["unit"]
    return pd.DataFrame({
        "table_id": rows["table_id"].to_numpy(), "analyte": rows["analyte"].to_numpy(),
        "fraction": rows["fraction"].to_numpy(), "duration": rows["duration"].to_numpy(),
        "basis": rows["basis"].to_numpy(), "scope": rows["scope"].to_numpy(), "limit_ug_L": limit,
        "limit": [words.entry_words(r, units[r["table_id"]]) for r in rows.to_dict("records")],
        "remark": text, "effective_from": rows["effective_from"].to_numpy(),
        "effective_to": rows["effective_to"].to_numpy(), "note": rows["note"].to_numpy(),
        "source": rows["table_id"].map(names).to_numpy(),
    }, columns=IN_FORCE_COLUMNS)
