"""The report's findings tables: exceedances with their limits side by side, the site–metal grid,
the undecided results, and the numbered references of the limit tables.

Each is one function of the screening table (one function per table, so that a caller can write
them one at a time). They return code columns; :mod:`tracescreen.report.words` puts them in words.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen import vocabulary
from tracescreen._internal.text import format_significant, significant_figures
from tracescreen.report.words import result_precision
from tracescreen.statistics.series import site_samples

RESULT_KEY = ["file", "sheet", "row"]
EXCEEDED_MARK = vocabulary.GLYPH["exceeds"]
#: Significant figures of a computed limit (hardness formula, forms): common practice.
COMPUTED_LIMIT_DIGITS = 3


def short_name(name: str) -> str:
    """A limit table's name up to its first comma (``"WHO Guidelines for Drinking-water Quality, 4th
    ed. ..."`` -> ``"WHO Guidelines for Drinking-water Quality"``)."""
    return str(name).split(",")[0].strip()


def limit_references(limit_tables: pd.DataFrame, used) -> pd.DataFrame:
    """Numbered references [1], [2], ... of the limit tables used, in table-id order.

    Returns
    -------
    pandas.DataFrame
        ``ref`` (int), ``table_id``, ``short_name``, ``name``, ``source``, ``url``.
    """
    t = limit_tables[limit_tables["table_id"].isin(set(used))].sort_values("table_id").reset_index(drop=True)
    url = t["url"].fillna("").astype(str) if "url" in t.columns else pd.Series([""] * len(t))
    return pd.DataFrame({"ref": np.arange(1, len(t) + 1), "table_id": t["table_id"].astype(str),
                         "short_name": t["name"].map(short_name), "name": t["name"].astype(str),
                         "source": t["source"].astype(str), "url": url.replace("nan", "")})


def limit_precision(rows: pd.DataFrame, entries: pd.DataFrame) -> np.ndarray:
    """Significant figures of each row's limit: as its table writes the value, else
    :data:`COMPUTED_LIMIT_DIGITS` for a computed limit (figures counted once per entry)."""
    if "value_text" not in entries.columns or "entry_id" not in rows.columns or entries.empty:
        return np.full(len(rows), COMPUTED_LIMIT_DIGITS)
    text = entries["value_text"].astype(object)
    sf = significant_figures(text.where(text.notna(), ""))
    digits = pd.Series(np.where(sf > 0, sf, COMPUTED_LIMIT_DIGITS), index=entries["entry_id"].astype(str).to_numpy())
    digits = digits[~digits.index.duplicated()]
    ids = rows["entry_id"]
    if isinstance(ids.dtype, pd.CategoricalDtype):  # map the categories, take by code
        cat = digits.reindex(ids.cat.categories.astype(str)).fillna(COMPUTED_LIMIT_DIGITS).to_numpy(int)
        codes = ids.cat.codes.to_numpy()
        return np.where(codes >= 0, cat[codes], COMPUTED_LIMIT_DIGITS)
    return ids.astype(str).map(digits).fillna(COMPUTED_LIMIT_DIGITS).to_numpy(int)


def limit_label(rows: pd.DataFrame, refs: pd.DataFrame) -> pd.Series:
    """The column label of each row's limit: ``[k]`` of its table, then its duration or period basis."""
    ref = rows["limit_table"].astype(str).map(dict(zip(refs["table_id"], refs["ref"]))).fillna(0).astype(int)
    duration = rows["duration"].astype(object).fillna("").astype(str) if "duration" in rows else ""
    basis = rows["basis"].astype(object).fillna("").astype(str) if "basis" in rows else ""
    period = pd.Series(basis, index=rows.index).where(~pd.Series(basis, index=rows.index).isin(["single_sample", ""]), "")
    what = (pd.Series(duration, index=rows.index) + " " + period.str.replace("_", " ")).str.strip()
    return "[" + ref.astype(str) + "]" + np.where(what != "", " " + what, "")


def _site_names(frame: pd.DataFrame, sites: pd.DataFrame | None) -> pd.Series:
    if sites is None or "name" not in sites.columns:
        return pd.Series([""] * len(frame), index=frame.index, dtype=object)
    names = dict(zip(sites["site_id"].astype(str), sites["name"].fillna("").astype(str)))
    return frame["site_id"].astype(str).map(names).fillna("").astype(object)


def _depends_on_hardness(rows: pd.DataFrame, entries: pd.DataFrame) -> np.ndarray:
    if "inputs" not in entries.columns or "entry_id" not in rows.columns:
        return np.zeros(len(rows), bool)
    uses = entries.set_index("entry_id")["inputs"].fillna("").astype(str).str.contains("hardness")
    if "hf_m" in entries.columns:
        uses |= entries.set_index("entry_id")["hf_m"].notna()
    return rows["entry_id"].astype(object).map(uses).fillna(False).to_numpy(bool)


def exceedance_rows(screening: pd.DataFrame, entries: pd.DataFrame, refs: pd.DataFrame,
                    sites: pd.DataFrame | None = None, max_results: int | None = None) -> tuple[pd.DataFrame, pd.DataFrame]:
    """One row per site-sample result above at least one limit, with every limit that applies to it
    side by side (one column per table and duration or period basis).

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (one row per result and limit).
    entries : pandas.DataFrame
        ``LimitSet.entries`` (for the limits' written precision and their inputs).
    refs : pandas.DataFrame
        :func:`limit_references`.
    sites : pandas.DataFrame, optional
        For the site names.
    max_results : int, optional
        Keep the first results only (in site, metal, date order); ``rows.attrs["total"]`` is the count
        of all results above a limit.

    Returns
    -------
    (rows, limits) : tuple of pandas.DataFrame
        ``rows``: ``site_id, site_name, sampled_at, sample_id, analyte, fraction, result_text, unit,
        value, hardness_used_mg_L`` (text; hardness only where a limit of the row depends on it) then
        one text column per limit label: the limit in µg/L to its table's precision, marked
        :data:`EXCEEDED_MARK` where exceeded, with the period value in brackets where the limit is on a
        period (its label then ends "(period value)").
        ``limits``: the same results × limits in long form with codes (``value_ug_L, limit_ug_L,
        ratio, status, limit_table, label``), for the workbook and the tests.
    """
    site = site_samples(screening)
    site = site[site["limit_ug_L"].notna()]
    key = [c for c in RESULT_KEY if c in site.columns]
    hit = site.loc[site["status"].eq("exceeds"), key].drop_duplicates()
    if hit.empty:
        cols = ["site_id", "site_name", "sampled_at", "sample_id", "analyte", "fraction", "result_text", "value_ug_L",
                "hardness_used_mg_L"]
        return pd.DataFrame({c: [] for c in cols}), site.iloc[:0]
    total = len(hit)
    if max_results is not None and total > max_results:
        first = site.loc[site["status"].eq("exceeds"), key + ["site_id", "analyte", "fraction", "sampled_at"]]
        first = first.drop_duplicates(key).sort_values(["site_id", "analyte", "fraction", "sampled_at"] + key,
                                                       kind="stable")
        hit = first[key].head(max_results)
    rows = site.merge(hit, on=key)
    rows = rows.sort_values(["site_id", "analyte", "fraction", "sampled_at"] + key, kind="stable").reset_index(drop=True)
    label = limit_label(rows, refs)
    value = format_significant(rows["limit_ug_L"], limit_precision(rows, entries))
    is_period = rows["period_value_ug_L"].notna().to_numpy() if "period_value_ug_L" in rows else np.zeros(len(rows), bool)
    period = format_significant(rows.get("period_value_ug_L", pd.Series(np.nan, index=rows.index)),
                                result_precision(rows["result_text"]))
    cell = np.where(rows["status"].eq("exceeds"), EXCEEDED_MARK + "\u00a0", "") + value
    cell = np.where(is_period, cell + " (" + period + ")", cell)
    label = label.where(~is_period, label + " (period value)")
    long = rows.assign(label=label.to_numpy(), cell=cell)
    results = long.drop_duplicates(key).set_index(key)
    wide = long.pivot_table(index=key, columns="label", values="cell", aggfunc="first", observed=True)
    wide = wide.reindex(results.index)
    order = sorted(wide.columns, key=lambda c: (int(c[1:c.index("]")]), c))
    hard = pd.Series(_depends_on_hardness(long, entries), index=long.index).groupby(
        [long[k] for k in key], observed=True, sort=False).any().reindex(results.index).fillna(False).to_numpy(bool)
    out = pd.DataFrame({
        "site_id": results["site_id"].astype(str).to_numpy(),
        "site_name": _site_names(results, sites).to_numpy(),
        "sampled_at": results["sampled_at"].to_numpy(),
        "sample_id": results["sample_id"].astype(str).to_numpy(),
        "analyte": results["analyte"].astype(str).to_numpy(),
        "fraction": results["fraction"].astype(str).to_numpy(),
        "result_text": (results["result_text"].astype(str) + " " + results["unit"].astype(str)).to_numpy(),
        "value_ug_L": format_significant(results["value_ug_L"], result_precision(results["result_text"])).to_numpy(),
        "hardness_used_mg_L": np.where(hard, format_significant(
            results.get("hardness_used_mg_L", pd.Series(np.nan, index=results.index)), 3).to_numpy(), ""),
    })
    for c in order:
        out[c] = wide[c].fillna("–").to_numpy()
    cols = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "value_ug_L", "limit_ug_L", "ratio",
            "status", "limit_table", "label"]
    out.attrs["total"] = total
    return out, long[[c for c in cols if c in long.columns]]


def status_counts(screening: pd.DataFrame) -> pd.DataFrame:
    """Per site and metal (analyte and fraction): the worst status of its site-sample results over
    all their limits, how many results have it (``k``) and how many results there are (``n``)."""
    site = site_samples(screening)
    if site.empty:
        return pd.DataFrame({c: [] for c in ("site_id", "analyte", "fraction", "n", "k", "status")})
    key = [c for c in RESULT_KEY if c in site.columns]
    code = site["status"].astype(str).map(vocabulary.STATUS_CODE).to_numpy(dtype=int)
    per_result = site.assign(_c=code).groupby(key + ["site_id", "analyte", "fraction"], observed=True)["_c"].min()
    per_result = per_result.reset_index()
    g = per_result.groupby(["site_id", "analyte", "fraction"], observed=True)["_c"]
    worst = g.min().rename("worst")
    cells = pd.concat([g.size().rename("n"), worst], axis=1).reset_index()
    k = per_result.merge(cells[["site_id", "analyte", "fraction", "worst"]], on=["site_id", "analyte", "fraction"])
    k = k[k["_c"] == k["worst"]].groupby(["site_id", "analyte", "fraction"], observed=True).size().rename("k")
    cells = cells.merge(k.reset_index(), on=["site_id", "analyte", "fraction"])
    cells["status"] = np.asarray(vocabulary.STATUSES, dtype=object)[cells["worst"].to_numpy()]
    return cells.drop(columns="worst")


def site_metal_grid(screening: pd.DataFrame, sites: pd.DataFrame | None = None) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The site–metal grid: one row per site (id and name), one column per metal (analyte and
    fraction); each cell the worst status's glyph and word with ``k/n`` (``"▲ above 3/36"``).

    Returns
    -------
    (cells, status) : tuple of pandas.DataFrame
        Text cells ("" where the site has no result of the metal), and each cell's status code.
    """
    c = status_counts(screening)
    if c.empty:
        return pd.DataFrame(), pd.DataFrame()
    glyph = c["status"].map(vocabulary.GLYPH) + " " + c["status"].map(vocabulary.SHORT)
    c = c.assign(metal=c["analyte"].astype(str) + " (" + c["fraction"].astype(str) + ")",
                 text=glyph + " " + c["k"].astype(str) + "/" + c["n"].astype(str))
    text = c.pivot(index="site_id", columns="metal", values="text").fillna("")
    status = c.pivot(index="site_id", columns="metal", values="status").fillna("")
    names = _site_names(text.reset_index(), sites).to_numpy()
    text.insert(0, "Site name", names)
    status.insert(0, "Site name", "")
    text.index.name = status.index.name = "Site"
    return text.reset_index(), status.reset_index()


def undecided(screening: pd.DataFrame, sites: pd.DataFrame | None = None) -> pd.DataFrame:
    """Results that decide nothing against a limit, per site, metal and status: a non-detect whose
    detection limit is above the limit, or a result above the calibrated range at or below it.

    Returns
    -------
    pandas.DataFrame
        ``site_id, site_name, analyte, fraction, status, results, max_detection_limit, limit_min_ug_L,
        limit_table`` (tables, comma-separated).
    """
    site = site_samples(screening)
    u = site[site["status"].isin(["nondetect_inconclusive", "above_range_inconclusive"])]
    cols = ["site_id", "site_name", "analyte", "fraction", "status", "results", "max_detection_limit",
            "limit_min_ug_L", "limit_table"]
    if u.empty:
        return pd.DataFrame({c: [] for c in cols})
    key = [c for c in RESULT_KEY if c in u.columns]
    group = ["site_id", "analyte", "fraction", "status"]
    u = u.assign(status=u["status"].astype(str), limit_table=u["limit_table"].astype(str))
    g = u.groupby(group, observed=True)
    n = u.drop_duplicates(key + group).groupby(group, observed=True).size()
    out = pd.DataFrame({"results": n, "max_detection_limit": g["detection_limit_ug_L"].max(),
                        "limit_min_ug_L": g["limit_ug_L"].min(),
                        "limit_table": g["limit_table"].agg(lambda s: ", ".join(sorted(set(s))))}).reset_index()
    out["site_name"] = _site_names(out, sites)
    return out[cols]
