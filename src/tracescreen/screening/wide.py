"""The result-wide screening table: one row per result, each applicable limit's value and status side by side.

The long screening table (one row per result and applicable limit entry) is the machine contract;
this is what a person reads: a result, then for every limit of the run (table, duration, basis) its
value [µg/L] and the result's status against it, and the worst status of the result over all its
limits (:data:`tracescreen.vocabulary.STATUSES`). A limit that does not apply to the result is left
empty. Where two entries of one table, duration and basis apply to one result (a total and a
dissolved criterion, say), the stricter status and its limit are shown; the long table has both.

The columns depend only on the run's limit tables (:func:`limit_keys`), never on which results a
part holds, so the parts of a run streamed one after the other form one table.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.vocabulary import STATUS_CODE, STATUSES

#: Result columns of the wide table, in order (those the screening table has).
RESULT_COLUMNS = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "sample_type", "result_text",
                  "unit", "value_ug_L", "detected", "detection_limit_ug_L", "qualifier", "hardness_used_mg_L"]
PROVENANCE = ["file", "sheet", "row"]
LIMIT_KEY = ["limit_table", "duration", "basis"]


def limit_keys(entries: pd.DataFrame) -> pd.DataFrame:
    """One row per (table, duration, basis) of a limit set's entries, in table order, with its ``label``.

    ``label`` names the limit in the wide table's columns: the table id, then the duration and the
    basis where they say more than a single-sample limit (e.g. ``us_epa_nrwqc_freshwater_aquatic_life acute``).
    """
    e = entries.rename(columns={"table_id": "limit_table"})
    keys = e[LIMIT_KEY].astype(str).replace({"nan": "", "None": ""}).drop_duplicates().reset_index(drop=True)
    label = [" ".join(w for w in (t, d, "" if b == "single_sample" else b) if w)
             for t, d, b in keys.itertuples(index=False)]  # a few keys: one label each
    return keys.assign(label=label)


def _text(values: pd.Series) -> pd.Series:
    """A text column with missing values as "" (categoricals stay categorical)."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        if "" not in values.cat.categories:
            values = values.cat.add_categories([""])
        return values.fillna("")
    return values.fillna("").astype(str)


def result_wide(screened: pd.DataFrame, keys: pd.DataFrame, result_id: np.ndarray | None = None) -> pd.DataFrame:
    """One row per result of ``screened`` with each limit of ``keys`` side by side.

    Parameters
    ----------
    screened : DataFrame
        Screening rows (DEVELOPERS.md, "Screening").
    keys : DataFrame
        :func:`limit_keys` of the run's limit set.
    result_id : array of int, optional
        Which result each screening row belongs to; default: the rows sharing ``file, sheet, row,
        analyte, fraction``.

    Returns
    -------
    DataFrame
        :data:`RESULT_COLUMNS`, ``worst_status``, then ``<label>: limit_ug_L`` and ``<label>: status``
        per key, then ``file, sheet, row``; results in order of their first screening row.
    """
    if result_id is None:
        result_id = screened.groupby(PROVENANCE + ["analyte", "fraction"], observed=True, sort=False).ngroup().to_numpy()
    result_id = np.asarray(result_id)
    ids, first, inverse = np.unique(result_id, return_index=True, return_inverse=True)
    order = np.argsort(first, kind="stable")  # results in order of appearance
    place = np.empty_like(order)
    place[order] = np.arange(len(order))
    res = place[inverse]  # each screening row's result, numbered in order of appearance
    n, k = len(ids), len(keys)
    status = screened["status"].map(STATUS_CODE).to_numpy(dtype=float)
    status = np.where(np.isnan(status), len(STATUSES), status).astype(np.int64)
    worst = np.full(n, len(STATUSES), np.int64)
    np.minimum.at(worst, res, status)
    index = pd.MultiIndex.from_frame(keys[LIMIT_KEY])
    row_keys = pd.MultiIndex.from_arrays([_text(screened[c]) for c in LIMIT_KEY])
    key = index.get_indexer(row_keys)
    hit = key >= 0
    # the strictest row of each (result, key) written last, so that it is the one kept
    rows = np.flatnonzero(hit)
    rows = rows[np.lexsort((-status[rows], key[rows], res[rows]))]
    limit = np.full((n, k), np.nan)
    code = np.full((n, k), -1, np.int64)
    limit[res[rows], key[rows]] = screened["limit_ug_L"].to_numpy(dtype=float)[rows]
    code[res[rows], key[rows]] = status[rows]
    firsts = first[order]
    cols = {c: screened[c].iloc[firsts].reset_index(drop=True) for c in RESULT_COLUMNS if c in screened.columns}
    statuses = pd.CategoricalDtype(list(STATUSES))
    cols["worst_status"] = pd.Categorical.from_codes(np.where(worst < len(STATUSES), worst, -1), dtype=statuses)
    for j, label in enumerate(keys["label"]):
        cols[f"{label}: limit_ug_L"] = limit[:, j]
        cols[f"{label}: status"] = pd.Categorical.from_codes(code[:, j], dtype=statuses)
    for c in PROVENANCE:
        if c in screened.columns:
            cols[c] = screened[c].iloc[firsts].reset_index(drop=True)
    return pd.DataFrame(cols, copy=False)
