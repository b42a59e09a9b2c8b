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
    res, first = _appearance(np.asarray(result_id))
    n, k = len(first), len(keys)
    status = _status_codes(screened["status"])
    worst = np.full(n, len(STATUSES), np.int64)
    np.minimum.at(worst, res, status)
    key = _key_positions(screened, keys)
    hit = key >= 0
    # the strictest row of each (result, key) written last, so that it is the one kept
    rows = np.flatnonzero(hit)
    cell = res[rows] * k + key[rows]  # rows come by result: nearly sorted already
    rows = rows[np.argsort(cell * (len(STATUSES) + 2) + (len(STATUSES) + 1 - status[rows]), kind="stable")]
    cell = key[rows] * n + res[rows]  # limit-major: each limit's values are one contiguous column
    limit = np.full(k * n, np.nan)
    code = np.full(k * n, -1, np.int8)
    limit[cell] = screened["limit_ug_L"].to_numpy(dtype=float)[rows]
    code[cell] = status[rows]
    limit, code = limit.reshape(k, n), code.reshape(k, n)
    firsts = first
    cols = {c: screened[c].iloc[firsts].reset_index(drop=True) for c in RESULT_COLUMNS if c in screened.columns}
    statuses = pd.CategoricalDtype(list(STATUSES))
    cols["worst_status"] = pd.Categorical.from_codes(np.where(worst < len(STATUSES), worst, -1), dtype=statuses)
    for j, label in enumerate(keys["label"]):
        cols[f"{label}: limit_ug_L"] = limit[j]
        cols[f"{label}: status"] = pd.Categorical.from_codes(code[j], dtype=statuses)
    for c in PROVENANCE:
        if c in screened.columns:
            cols[c] = screened[c].iloc[firsts].reset_index(drop=True)
    return pd.DataFrame(cols, copy=False)


def _appearance(result_id: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each row's result numbered in order of first appearance, and the first row of each result
    (ids already in ascending order, as a part's screening rows are, need no sort)."""
    if len(result_id) and (result_id[1:] >= result_id[:-1]).all():
        new = np.r_[True, result_id[1:] != result_id[:-1]]
        return np.cumsum(new) - 1, np.flatnonzero(new)
    _, first, inverse = np.unique(result_id, return_index=True, return_inverse=True)
    order = np.argsort(first, kind="stable")  # results in order of appearance
    place = np.empty_like(order)
    place[order] = np.arange(len(order))
    return place[inverse.ravel()], first[order]


def _status_codes(status: pd.Series) -> np.ndarray:
    """Each row's position in :data:`STATUSES` (``len(STATUSES)`` for none), per category where categorical."""
    if isinstance(status.dtype, pd.CategoricalDtype):
        per_category = status.cat.categories.map(STATUS_CODE).to_numpy(dtype=float)
        code = np.append(per_category, np.nan)[status.cat.codes.to_numpy()]  # code -1 (missing): none
    else:
        code = status.map(STATUS_CODE).to_numpy(dtype=float)
    return np.where(np.isnan(code), len(STATUSES), code).astype(np.int64)


def _key_positions(screened: pd.DataFrame, keys: pd.DataFrame) -> np.ndarray:
    """Each screening row's position in ``keys`` by its (table, duration, basis) text (-1: none; a missing
    text is ""), from the columns' category codes: each distinct combination of texts is looked up once,
    not each row."""
    joint = np.zeros(len(screened), dtype=np.int64)
    wheres = []
    for c in LIMIT_KEY:
        values = screened[c]
        if isinstance(values.dtype, pd.CategoricalDtype):
            codes, uniques = values.cat.codes.to_numpy(), values.cat.categories
        else:
            codes, uniques = pd.factorize(values.fillna("").astype(str))
        known = pd.Index(keys[c].unique())
        # position in ``known`` of each code's text, the last for code -1 (missing: "")
        wheres.append(known.get_indexer(pd.Index(np.append(np.asarray(uniques, dtype=object), ""), dtype=object)))
        joint = joint * len(wheres[-1]) + np.where(codes < 0, len(wheres[-1]) - 1, codes)
    sizes = [len(pd.Index(keys[c].unique())) for c in LIMIT_KEY]
    table = np.full(int(np.prod(sizes)), -1, dtype=np.int64)
    key_codes = np.zeros(len(keys), dtype=np.int64)
    for c, size in zip(LIMIT_KEY, sizes):
        key_codes = key_codes * size + pd.Index(keys[c].unique()).get_indexer(keys[c])
    if not len(table):
        return np.full(len(screened), -1, dtype=np.int64)
    table[key_codes] = np.arange(len(keys))  # keys are distinct (limit_keys)
    # every combination of the columns' codes (a few hundred): its key position
    combo = np.zeros(1, dtype=np.int64)
    for where, size in zip(wheres, sizes):
        combo = np.where((combo[:, None] < 0) | (where[None, :] < 0), -1, combo[:, None] * size + where[None, :]).ravel()
    per_combo = np.where(combo < 0, -1, table[np.maximum(combo, 0)])
    return per_combo[joint]
