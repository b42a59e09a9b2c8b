"""Limits on a statistic of a site's results over time: running annual means, period means, percentiles.

``basis: running_annual_mean``
    The mean of the site's results (same analyte and fraction) in the 12 months ending at each
    sample: sampled on a day d with ``sample day - 12 months < d <= sample day``. Each result gets
    the mean of its window (e.g. US EPA inorganic MCLs, 40 CFR 141.23(i)).
``basis: period_mean``
    The mean of the site's results in each period (``period``): e.g. the calendar-year mean of an
    annual-average EQS (Directive 2008/105/EC Annex I Part B).
``basis: percentile``
    A percentile of the site's results in each monitoring period (``period``: calendar_year,
    half_year, quarter, month), with ``percentile`` (e.g. 90) and ``percentile_method`` (e.g. the
    US EPA lead and copper action levels, 40 CFR 141.80(c)). Every result of the period gets the
    period's value; the limit in force on the period's last sample date applies.

How non-detects enter the statistic is the table setting ``nondetect_rule``: ``zero``, ``half_dl``
(half the detection limit), ``dl`` (the detection limit) or ``kaplan_meier`` (Kaplan-Meier mean or
quantile, Efron correction, :func:`tracescreen.statistics.censored.kaplan_meier_grouped`). The statistic
is also computed with non-detects at zero and at their detection limit; these bounds bracket the
statistic of the true values, and a non-detect is never made into an exceedance:

- ``exceeds``: the rule's value is above the limit and so is the value with non-detects at zero;
- ``nondetect_inconclusive``: the rule's value is above the limit only because of non-detects, or
  every result is a non-detect and a detection limit is above the limit;
- ``meets``: the rule's value is at or below the limit (a note says when it would not be with
  non-detects at their detection limit);
- ``nondetect_meets``: every result is a non-detect, all detection limits at or below the limit.

Percentile methods: :mod:`tracescreen.screening.percentiles`; status of a period value:
:func:`tracescreen.screening.status.statistic_status`. :func:`apply_period_statuses` replaces the status
of rows whose entry has a period basis; :func:`period_table` gives one row per period value with the
results that formed it (``periods.csv``).

References
----------
[CFR40-141]_, [HyndmanFan1996]_, [Helsel2012]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa
from pandas.api.types import union_categoricals

from tracescreen._internal.coded import combo_text
from tracescreen._internal.frames import concat_arrays, decoded, replace_at, str_array
from tracescreen.io.units import clean_decimal
from tracescreen.limits.schema import PERIOD_BASES
from tracescreen.screening.percentiles import group_percentiles, substitute
from tracescreen.screening.period_results import day_texts
from tracescreen.screening.period_results import joined as _joined
from tracescreen.screening.rounding import entry_significant_figures, round_to_limit_figures
from tracescreen.screening.status import statistic_status
from tracescreen.screening.windows import WINDOW_MONTHS, period_bounds, running_windows, series_first_row, window_sums
from tracescreen.statistics.censored import kaplan_meier_grouped

NONDETECT_RULE_TEXT = {"zero": "non-detects as zero", "half_dl": "non-detects at half the detection limit",
                       "dl": "non-detects at the detection limit", "kaplan_meier": "Kaplan-Meier for non-detects"}

PERIOD_COLUMNS = [
    "period_id", "limit_table", "use", "site_id", "analyte", "fraction", "basis", "duration", "statistic",
    "period", "period_start", "period_end", "n_results", "n_nondetects", "nondetect_rule", "value_ug_L",
    "value_nondetects_zero_ug_L", "value_nondetects_at_dl_ug_L", "limit_ug_L", "ratio", "status", "note",
    "source", "results",
]



#: Notes on period values whose decision depends on the non-detects (kind 1 and 2 of :func:`_decide`).
DECISION_NOTES = ("", "above the limit only because of non-detects: cannot decide",
                  "meets; above the limit with non-detects at their detection limit")


def _decide(value, lower, upper, all_nd, limit, sig, rounding_on):
    """Status and note kind (index in :data:`DECISION_NOTES`) of period values, after the table's rounding."""
    v, lo, up, lim = (np.asarray(a, dtype=float) for a in (value, lower, upper, limit))
    if rounding_on.any():
        v, lo, up = (np.where(rounding_on, round_to_limit_figures(a, lim, sig), a) for a in (v, lo, up))
    return statistic_status(v, lo, up, all_nd, lim)


_ROW_COLUMNS = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "value_ug_L", "detected",
                "detection_limit_ug_L", "limit_table", "duration", "basis", "limit_ug_L", "entry_id"]


def _entry_params(rows: dict, limits) -> dict[str, np.ndarray]:
    """Per row: non-detect rule, rounding, significant figures, percentile, period and method of its entry/table."""
    tables = limits.tables
    settings = {t: (s or {}) for t, s in zip(tables["table_id"], tables["settings"])}
    tcode, tcat = pd.factorize(rows["limit_table"])
    ecode, ecat = pd.factorize(rows["entry_id"])
    ents = limits.entries.set_index("entry_id").reindex(ecat)
    sig = pd.Series(entry_significant_figures(limits.entries), index=limits.entries["entry_id"]).reindex(ecat)

    def per_table(f):
        return np.array([f(settings.get(t, {})) for t in tcat], dtype=object)[tcode]

    def per_table_coded(values: list) -> pd.Categorical:
        codes, uniq = pd.factorize(np.array(values, dtype=object))
        return pd.Categorical.from_codes(codes[tcode], categories=pd.Index(uniq, dtype=object).astype(str))

    def per_entry(k):  # one value per distinct entry of the rows (taken to the rows by ``ecode``)
        return ents[k].to_numpy(dtype=object) if k in ents else np.full(len(ecat), None, dtype=object)

    method = per_entry("percentile_method")  # else the table's (an entry's rows all have its table)
    default_method = np.array([settings.get(t, {}).get("percentile_method") for t in ents["table_id"]], dtype=object)
    return {
        "rule": per_table(lambda s: s.get("nondetect_rule", "dl")),
        "rounding": per_table(lambda s: s.get("rounding", "none") == "significant_figures").astype(bool),
        # the table's title, as in screening.csv (full citations: limit_tables.csv, once per table);
        # coded per table (the periods table gets them as text, :data:`_CODED_TEXT`)
        "source": per_table_coded([tables.set_index("table_id")["name"].get(t, "") for t in tcat]),
        "use": per_table_coded([tables.set_index("table_id")["use"].get(t, "") for t in tcat]),
        "sig": sig.to_numpy(dtype=float)[ecode],
        "percentile": pd.to_numeric(pd.Series(per_entry("percentile")), errors="coerce").to_numpy(dtype=float)[ecode],
        "period": per_entry("period")[ecode],
        "percentile_method": np.where(pd.isna(method), default_method, method)[ecode],
    }


def _take(rows: dict, idx: np.ndarray) -> dict:
    return {k: v[idx] for k, v in rows.items()}


def _series_codes(rows: dict, extra: np.ndarray | None = None) -> np.ndarray:
    """One integer per (table, duration, scope, site, analyte, fraction[, extra]) series (mixed radix)."""
    cols = [rows[k] for k in ("limit_table", "duration", "limit_scope", "site_id", "analyte", "fraction") if k in rows]
    key = np.zeros(len(cols[0]), dtype=np.int64)
    for c in cols + ([extra] if extra is not None else []):
        codes, cats = pd.factorize(c)
        key = key * max(len(cats), 1) + codes
    return key


def _values_at(col: pd.Series, pos: np.ndarray) -> np.ndarray:
    """Values of a column at positions as numpy (text as object), decoding categoricals by code."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        codes = col.cat.codes.to_numpy()[pos]
        if (codes >= 0).all():  # stays coded: takes and sorts below move integers, not strings
            return pd.Categorical.from_codes(codes, dtype=col.dtype)
        cats = np.append(np.asarray(col.cat.categories.astype(object), dtype=object), "")
        return cats[codes]  # code -1 (missing) -> ""
    if pd.api.types.is_string_dtype(col.dtype):
        return col.to_numpy(dtype=object)[pos]
    return col.to_numpy()[pos]


def evaluate(screened: pd.DataFrame, limits, with_results: bool = False,
             with_table: bool = True) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    """Period statistics for the screening rows whose entry has a period basis.

    Parameters
    ----------
    screened : DataFrame
        Screening rows (:func:`tracescreen.screening.screen.screen` columns).
    limits : LimitSet
        The limit tables the rows were screened against (settings and entry keys).
    with_results : bool
        Also list, per period value, the results that formed it (slower; for ``periods.csv``).
    with_table : bool
        Build the ``periods`` table (False: only ``per_row``, for screening).

    Returns
    -------
    (per_row, periods)
        ``per_row``: for the period rows (index: their positions in `screened`) ``status, ratio,
        note, period_id, period_value_ug_L``. ``periods``: :data:`PERIOD_COLUMNS`, one row per value.
    """
    is_period = screened["basis"].isin(PERIOD_BASES).to_numpy() & (screened["sample_type"] == "sample").to_numpy()
    pos = np.flatnonzero(is_period)
    if pos.size == 0:
        return (pd.DataFrame(columns=["status", "ratio", "note", "period_id", "period_value_ug_L"]),
                pd.DataFrame(columns=PERIOD_COLUMNS))
    rows = {c: _values_at(screened[c], pos) for c in _ROW_COLUMNS + ["limit_scope"] if c in screened}
    par = _entry_params(rows, limits)
    per_rows, tables = [], []
    for basis, fn in (("running_annual_mean", _running_means), ("percentile", _percentiles),
                      ("period_mean", _percentiles)):
        sel = np.flatnonzero(rows["basis"] == basis)
        if sel.size:
            r, t = fn(_take(rows, sel), _take(par, sel), with_results, with_table)
            r.index = pos[sel][r.index.to_numpy()]
            r["period_no"] += sum(len(x["status"]) for x in tables)
            per_rows.append(r)
            tables.append(t)
    notes = union_categoricals([pd.Categorical(r.pop("note")) for r in per_rows])  # stays categorical
    per_row = pd.concat(per_rows).assign(note=notes).sort_index()
    per_row["period_id"] = per_row.pop("period_no").to_numpy() + 1
    for c in ("ratio", "period_value_ug_L"):
        per_row[c] = clean_decimal(per_row[c].to_numpy(dtype=float))
    if not with_table:
        return per_row, None
    periods = _frame(tables)
    periods["period_id"] = np.arange(1, len(periods) + 1)
    for c in ("value_ug_L", "value_nondetects_zero_ug_L", "value_nondetects_at_dl_ug_L", "ratio"):
        periods[c] = clean_decimal(periods[c].to_numpy(dtype=float))
    return per_row, periods[PERIOD_COLUMNS]


#: Columns of the periods table held as categoricals of text while computed, written as text.
_CODED_TEXT = ("source", "use")


def _frame(tables: list[dict]) -> pd.DataFrame:
    """The periods table from its parts (one per basis), as ``pandas.concat`` of each part as a DataFrame
    would give it, column by column: text columns (what pandas would make ``str``) are made ``str``
    arrays by Arrow (:func:`~tracescreen._internal.frames.str_array`), not row by row, and joined as Arrow
    chunks; numbers and categoricals of one dtype by their values and codes."""
    sizes = [len(t["n_results"]) for t in tables]

    def text(v) -> bool:
        return isinstance(v, str) or ((isinstance(v, list) or (isinstance(v, np.ndarray) and v.dtype == object))
                                      and pd.api.types.infer_dtype(v, skipna=True) == "string")

    columns = {}
    for k in tables[0]:
        pieces = [decoded(t[k]) if k in _CODED_TEXT else str_array(t[k], n) if text(t[k]) else t[k]
                  for t, n in zip(tables, sizes)]
        columns[k] = pieces[0] if len(pieces) == 1 else concat_arrays(pieces)
    return pd.DataFrame(columns, copy=False)


def _by_rule(rule: np.ndarray, lower: np.ndarray, upper: np.ndarray, statistic) -> np.ndarray:
    """The statistic by each row's non-detect rule (NaN for kaplan_meier, computed apart): ``lower`` (non-detects
    at zero) and ``upper`` (at their detection limit) are already those of ``zero`` and ``dl``."""
    value = np.full(len(rule), np.nan)
    for name, known in (("zero", lower), ("half_dl", None), ("dl", upper)):
        m = rule == name
        if m.any():
            value[m] = (known if known is not None else statistic(name))[m]
    return value


def _running_means(rows: dict, par: dict, with_results: bool, with_table: bool):
    code = _series_codes(rows)
    order = np.lexsort((rows["sampled_at"].astype("datetime64[ns]"), code))
    code, r, p = code[order], _take(rows, order), _take(par, order)
    start, stop = running_windows(code, r["sampled_at"])
    det = r["detected"].astype(bool)
    val, dl = r["value_ug_L"].astype(float), r["detection_limit_ug_L"].astype(float)
    n = (stop - start).astype(float)
    n_nd = window_sums((~det).astype(float), start, stop, code)
    rule = p["rule"]
    upper_values = substitute(val, dl, det, "dl")  # the censored-series convention: DL for a non-detect
    lower = window_sums(substitute(val, dl, det, "zero"), start, stop, code) / n
    upper = window_sums(upper_values, start, stop, code) / n
    value = _by_rule(rule, lower, upper, lambda name: window_sums(substitute(val, dl, det, name), start, stop, code) / n)
    has_nan = window_sums(np.isnan(upper_values).astype(float), start, stop, code) > 0
    km = np.flatnonzero((rule == "kaplan_meier") & ~has_nan)
    if km.size:  # every window as its own series (windows overlap), one vectorised pass
        size = stop[km] - start[km]
        take = np.repeat(start[km] - np.cumsum(size) + size, size) + np.arange(size.sum())
        value[km] = kaplan_meier_grouped(upper_values[take], ~det[take], np.repeat(np.arange(km.size), size),
                                         km.size, probs=())["mean"].to_numpy()
    limit = r["limit_ug_L"].astype(float)
    status, kind = _decide(value, lower, upper, n_nd == n, limit, p["sig"], p["rounding"])
    day = pd.DatetimeIndex(r["sampled_at"]).normalize().to_numpy()
    first_day = day[series_first_row(code)]  # rows sorted by series, then date (a missing date last)
    days, at_day = np.unique(day, return_inverse=True)  # each distinct day's window worked out once
    window_start = (pd.DatetimeIndex(days) - pd.DateOffset(months=WINDOW_MONTHS)
                    + pd.Timedelta(days=1)).to_numpy()[at_day.ravel()]
    short = first_day > window_start
    note = combo_text([n.astype(int), rule, short, kind], lambda k, ru, sh, kd: "; ".join(filter(None, [
        f"running annual mean of {k} result{'' if k == 1 else 's'} ({NONDETECT_RULE_TEXT[ru]})",
        "less than 12 months of record" if sh else "", DECISION_NOTES[kd]])))
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = value / limit
    per_row = pd.DataFrame({"status": status, "ratio": ratio, "note": note,
                            "period_value_ug_L": value, "period_no": np.arange(code.size)}, index=order)
    if not with_table:
        return per_row, {"status": status}
    periods = {
        "limit_table": r["limit_table"], "use": p["use"], "site_id": r["site_id"],
        "analyte": r["analyte"], "fraction": r["fraction"], "basis": "running_annual_mean",
        "duration": r["duration"], "statistic": "mean",
        "period": pd.array(day_texts(day, "12 months to ").cast(pa.large_string()), dtype="str"),
        "period_start": window_start, "period_end": day, "n_results": n.astype(int),
        "n_nondetects": n_nd.astype(int), "nondetect_rule": rule, "value_ug_L": value,
        "value_nondetects_zero_ug_L": lower, "value_nondetects_at_dl_ug_L": upper, "limit_ug_L": limit,
        "ratio": ratio, "status": status, "note": note, "source": p["source"],
        "results": _joined(r, start, stop) if with_results else "",
    }
    return per_row, periods


def _percentiles(rows: dict, par: dict, with_results: bool, with_table: bool):
    label = np.empty(rows["basis"].size, dtype=object)
    p_start = np.empty(rows["basis"].size, dtype="datetime64[ns]")
    p_end = np.empty(rows["basis"].size, dtype="datetime64[ns]")
    for period in pd.unique(par["period"]):  # at most four kinds
        m = par["period"] == period
        label[m], p_start[m], p_end[m] = period_bounds(rows["sampled_at"][m], period)
    code = _series_codes(rows, label)
    order = np.lexsort((rows["sampled_at"].astype("datetime64[ns]"), code))
    code, r, p = code[order], _take(rows, order), _take(par, order)
    label, p_start, p_end = label[order], p_start[order], p_end[order]
    det = r["detected"].astype(bool)
    val, dl = r["value_ug_L"].astype(float), r["detection_limit_ug_L"].astype(float)
    starts = np.flatnonzero(np.concatenate([[True], np.diff(code) != 0]))
    stops = np.append(starts[1:], code.size)
    group = np.repeat(np.arange(starts.size), stops - starts)
    last = stops - 1  # the limit in force on the period's last sample date applies
    pct, method, rule = p["percentile"][last], p["percentile_method"][last], p["rule"][last]
    mean = r["basis"][last] == "period_mean"  # one basis per call: every group a mean, or every one a percentile

    def stat_of(x):
        if mean.any():
            return np.bincount(group, weights=x, minlength=starts.size) / np.bincount(group, minlength=starts.size)
        return group_percentiles(x, group, pct, method)

    lower = stat_of(substitute(val, dl, det, "zero"))
    upper = stat_of(substitute(val, dl, det, "dl"))
    value = _by_rule(rule, lower, upper, lambda name: stat_of(substitute(val, dl, det, name)))
    censored = np.zeros(starts.size, dtype=bool)
    km = (rule == "kaplan_meier") & (np.bincount(group, weights=np.isnan(dl) & ~det, minlength=starts.size) == 0)
    if mean.any() and km.any():  # Kaplan-Meier mean of each period
        g_in = np.isin(group, np.flatnonzero(km))
        value[km] = kaplan_meier_grouped(substitute(val, dl, det, "dl")[g_in], ~det[g_in], np.searchsorted(
            np.flatnonzero(km), group[g_in]), int(km.sum()), probs=())["mean"].to_numpy()
        km[:] = False
    for q in np.unique(pct[km]):  # Kaplan-Meier quantile: smallest x with F(x) >= q
        groups = np.flatnonzero(km & (pct == q))
        rows_in = np.isin(group, groups)
        code = np.searchsorted(groups, group[rows_in])
        est = kaplan_meier_grouped(substitute(val, dl, det, "dl")[rows_in], ~det[rows_in], code, groups.size,
                                   probs=(q / 100.0,)).iloc[:, -1].to_numpy()
        value[groups] = est
        censored[groups] = np.isnan(est)  # below the smallest detect: only "< DL" is known
    n = stops - starts
    n_nd = np.bincount(group, weights=(~det).astype(float), minlength=starts.size).astype(int)
    limit_all = r["limit_ug_L"].astype(float)
    limit = limit_all[last]
    status, kind = _decide(value, lower, upper, (n_nd == n) | censored, limit, p["sig"][last], p["rounding"][last])
    lim_min = np.minimum.reduceat(np.nan_to_num(limit_all, nan=np.inf), starts)
    lim_max = np.maximum.reduceat(np.nan_to_num(limit_all, nan=-np.inf), starts)
    stat = np.where(mean, "mean", np.char.mod("%g", np.nan_to_num(pct)).astype(object) + "th percentile ("
                    + method.astype(str).astype(object) + ")").astype(object)
    note = combo_text([stat, n, label[last], rule, kind, lim_min != lim_max],
                       lambda st, k, lab, ru, kd, ch: "; ".join(filter(None, [
                           f"{st} of {k} result{'' if k == 1 else 's'} in {lab} ({NONDETECT_RULE_TEXT[ru]})", DECISION_NOTES[kd],
                           "the limit changed within the period; the limit in force on the last sample date "
                           "applies" if ch else ""])))
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = value / limit
    per_row = pd.DataFrame({"status": status[group], "ratio": ratio[group], "note": note[group],
                            "period_value_ug_L": value[group], "period_no": group}, index=order)
    if not with_table:
        return per_row, {"status": status}
    periods = {
        "limit_table": r["limit_table"][last], "use": p["use"][last], "site_id": r["site_id"][last],
        "analyte": r["analyte"][last], "fraction": r["fraction"][last], "basis": r["basis"][last],
        "duration": r["duration"][last], "statistic": stat, "period": label[last],
        "period_start": p_start[last], "period_end": p_end[last], "n_results": n, "n_nondetects": n_nd,
        "nondetect_rule": rule, "value_ug_L": value, "value_nondetects_zero_ug_L": lower,
        "value_nondetects_at_dl_ug_L": upper, "limit_ug_L": limit, "ratio": ratio, "status": status, "note": note,
        "source": p["source"][last], "results": _joined(r, starts, stops) if with_results else "",
    }
    return per_row, periods


def period_statuses(screened: pd.DataFrame, limits, with_table: bool = False,
                    with_results: bool = True) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    """Screening rows with period-basis statuses filled in (adds ``period_id, period_value_ug_L``),
    and the periods table when ``with_table`` (computed in the same pass; :data:`PERIOD_COLUMNS`)."""
    out = screened
    if "period_id" not in out or "period_value_ug_L" not in out:
        out = out.assign(period_id=pd.array([pd.NA] * len(out), dtype="Int64"), period_value_ug_L=np.nan)
    per_row, table = evaluate(out, limits, with_results=with_table and with_results, with_table=with_table)
    if len(per_row):
        where = per_row.index.to_numpy()
        out = out.assign(**{c: replace_at(out[c], where, per_row[c].array)
                            for c in ("status", "ratio", "note", "period_id", "period_value_ug_L")})
    return out, table


def apply_period_statuses(screened: pd.DataFrame, limits) -> pd.DataFrame:
    """Screening rows with period-basis statuses filled in (adds ``period_id, period_value_ug_L``)."""
    return period_statuses(screened, limits)[0]


def period_table(screened: pd.DataFrame, limits) -> pd.DataFrame:
    """One row per period value, with the results that formed it (the ``periods.csv`` table)."""
    return evaluate(screened, limits, with_results=True)[1]
