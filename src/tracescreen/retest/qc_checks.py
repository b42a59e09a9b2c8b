"""Quality-control checks: field duplicates, blanks, dissolved vs total, holding times.

Each check takes the accepted results (or the screening table; the per-limit repetition is dropped)
and returns retest rows (:data:`tracescreen.retest.rows.RETEST_COLUMNS`). Blanks and field duplicates are
QC samples: they are never screened against limits as if they were site samples; here they are used
to judge the site samples of their pair or batch.

Thresholds are options; the defaults are common practice for water (see each function). Non-detects
in a comparison are taken at their detection limit, which is the conservative choice for a
difference check (a detect well above the detection limit still shows up as a difference).

Concentrations are in µg/L.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_date, format_number
from tracescreen.retest.rows import (
    RTOL,
    empty_retest,
    flagged_text,
    nonblank,
    results_from_screening,
    retest_rows,
    shown,
    ug,
)
from tracescreen.statistics.series import censored_value, site_samples

BLANK_TYPES = ("field_blank", "lab_blank")

HOLDING_TIMES = {
    "mercury": pd.Timedelta(days=28),
    "chromium(vi)": pd.Timedelta(hours=24),
    "*": pd.DateOffset(months=6),
}
"""Default holding times (water): mercury 28 days, chromium(VI) 24 hours (without the pH 9.3-9.7
buffer that extends it to 28 days), every other metal 6 calendar months. Source: US EPA, 40 CFR
136.3 Table II, Required containers, preservation techniques, and holding times (6 months checked;
28 days for mercury by cold-vapour AA and 24 h for chromium(VI) from memory). The key ``"*"`` is the
default for analytes not listed."""


def _both_sides(pairs: pd.DataFrame, left: str, right: str, detail: pd.Series, reason: str) -> pd.DataFrame:
    """Retest rows for both members of each flagged pair (columns suffixed ``left``/``right``)."""
    cols = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "lab", "batch"]
    parts = []
    for suffix in (left, right):
        side = pd.DataFrame({c: pairs[c + suffix] if c + suffix in pairs.columns else pairs[c]
                             for c in cols if c + suffix in pairs.columns or c in pairs.columns})
        parts.append(retest_rows(side, reason, detail.to_numpy()))
    return pd.concat(parts, ignore_index=True)


def duplicate_disagrees(results: pd.DataFrame, rpd_percent: float = 30.0, rpd_min_multiple: float = 5.0,
                        abs_multiple: float = 1.0) -> pd.DataFrame:
    """Field duplicate pairs whose results disagree; both samples of a pair are flagged.

    A field duplicate (``sample_type == "field_duplicate"``) is paired with the result of its
    ``parent_sample_id`` for the same analyte and fraction. When both are detected and both are
    ``>= rpd_min_multiple`` × the detection limit, the pair disagrees if the relative percent
    difference ``RPD = |A − B| / ((A + B)/2) × 100`` is above ``rpd_percent``; otherwise (a result
    near or below the detection limit) if ``|A − B|`` is above ``abs_multiple`` × the detection
    limit, with a non-detect taken at its detection limit. The larger detection limit of the pair
    is used. Two non-detects agree.

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results.
    rpd_percent : float
        Default 30 % (field duplicates of water: project plans choose 20-50 %, common practice).
    rpd_min_multiple : float
        Default 5 (RPD only at or above 5 × the detection limit, common practice).
    abs_multiple : float
        Default 1 (absolute difference against 1 × the detection limit, common practice).

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``duplicate_disagrees`` (two rows per disagreeing pair).

    The US EPA National Functional Guidelines [USEPA2020NFG]_ give no numeric criterion for field
    duplicates (the 30 % is common practice of project plans). Their laboratory-duplicate rule has
    the same shape, RPD <= 20 % when both results are >= 5 x the quantitation limit, else
    |A - B| <= the quantitation limit (from memory); the laboratory QC review applies it to the
    lab's own duplicates (retest reason ``lab_duplicate_disagrees``, :mod:`tracescreen.retest.labqc.precision`).

    References
    ----------
    [USEPA2020NFG]_ (docs/references.md)
    """
    res = results_from_screening(results)
    dup = res[res["sample_type"].eq("field_duplicate").to_numpy() & nonblank(res["parent_sample_id"])]
    if dup.empty:
        return empty_retest()
    dup = flagged_text(dup)
    parent = site_samples(res)
    parent = flagged_text(parent[parent["sample_id"].isin(pd.unique(dup["parent_sample_id"])).to_numpy()])
    pairs = parent.merge(dup, left_on=["sample_id", "analyte", "fraction"],
                         right_on=["parent_sample_id", "analyte", "fraction"], suffixes=("_p", "_d"))
    if pairs.empty:
        return empty_retest()
    a, b = censored_value(pairs, "_p"), censored_value(pairs, "_d")
    det_a, det_b = pairs["detected_p"].astype(bool), pairs["detected_d"].astype(bool)
    dl = np.fmax(pairs["detection_limit_ug_L_p"], pairs["detection_limit_ug_L_d"])
    rpd = (a - b).abs() / ((a + b) / 2) * 100
    both_high = det_a & det_b & (dl.isna() | ((a >= rpd_min_multiple * dl * (1 - RTOL))
                                              & (b >= rpd_min_multiple * dl * (1 - RTOL))))
    by_rpd = both_high & (rpd > rpd_percent * (1 + RTOL))
    by_abs = ~both_high & (det_a | det_b) & ((a - b).abs() > abs_multiple * dl * (1 + RTOL))
    flagged = pairs[by_rpd | by_abs]
    if flagged.empty:
        return empty_retest()
    fr = rpd[flagged.index]
    rule = np.where(by_rpd[flagged.index],
                    "RPD " + format_number(fr, 3) + " % > " + format_number([rpd_percent])[0]
                    + " % (both >= " + format_number([rpd_min_multiple])[0] + " × DL)",
                    "difference " + ug((a - b).abs()[flagged.index]) + " > "
                    + format_number([abs_multiple])[0] + " × DL " + ug(dl[flagged.index]))
    detail = ("field duplicate pair " + flagged["sample_id_p"] + " / " + flagged["sample_id_d"] + ": "
              + shown(flagged, "_p") + " and " + shown(flagged, "_d") + "; " + rule)
    return _both_sides(flagged, "_p", "_d", detail, "duplicate_disagrees")


def blank_contamination(results: pd.DataFrame, multiple: float = 5.0, blanks: pd.DataFrame | None = None) -> pd.DataFrame:
    """Detected samples in a batch whose blank is contaminated, when below ``multiple`` × the blank.

    A field or lab blank detected above its detection limit for an analyte marks its batch (same
    ``lab`` and ``batch``; any fraction). Detected site samples and field duplicates of that batch
    and analyte with a value below ``multiple`` × the highest blank value are flagged: their result
    may come partly from contamination. Non-detects are not flagged (contamination biases high).
    Results without a batch cannot be attributed and are not checked.

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results.
    multiple : float
        Default 5: the 5 × blank rule of the editions of the US EPA National Functional Guidelines
        for inorganic data review before the quantitation-limit tiers (from memory; common
        practice). The 2020 edition qualifies by the blank's and the quantitation limit's tiers;
        the laboratory QC review applies them to the lab's calibration and method blanks
        (retest reason ``blank_affects_result``, :mod:`tracescreen.retest.labqc.blanks`).
    blanks : pandas.DataFrame, optional
        The blanks of the whole run, when ``results`` holds only some of its sites (the blanks of
        ``results`` are then among them).

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``blank_contamination``.
    """
    res = results_from_screening(results)
    pool = res if blanks is None else blanks[[c for c in res.columns if c in blanks.columns]]
    blank = pool[pool["sample_type"].isin(BLANK_TYPES).to_numpy() & nonblank(pool["batch"])
                 & (pool["detected"].astype(bool) & ~(pool["value_ug_L"] <= pool["detection_limit_ug_L"])).to_numpy()]
    if blank.empty:
        return empty_retest()
    blank = flagged_text(blank)
    worst = (blank.sort_values("value_ug_L", ascending=False, kind="stable")
             .drop_duplicates(["lab", "batch", "analyte"])
             [["lab", "batch", "analyte", "sample_id", "sample_type", "value_ug_L"]]
             .rename(columns={"sample_id": "_blank_id", "sample_type": "_blank_type",
                              "value_ug_L": "_blank"}))
    samples = res[(res["sample_type"].isin(["sample", "field_duplicate"]) & res["detected"].astype(bool)
                   & res["batch"].isin(pd.unique(worst["batch"]))).to_numpy() & nonblank(res["batch"])]
    hit = flagged_text(samples).merge(worst, on=["lab", "batch", "analyte"])
    hit = hit[hit["value_ug_L"] < multiple * hit["_blank"] * (1 - RTOL)]
    if hit.empty:
        return empty_retest()
    detail = (hit["_blank_type"].str.replace("_", " ") + " " + hit["_blank_id"] + " in batch "
              + hit["batch"] + " detected " + ug(hit["_blank"]) + "; this result "
              + ug(hit["value_ug_L"]) + " is below " + format_number([multiple])[0]
              + " × the blank (" + ug(multiple * hit["_blank"]) + ")")
    return retest_rows(hit, "blank_contamination", detail)


#: Columns of a dissolved and total pair that the check and its retest rows read.
_PAIRED = ["site_id", "sample_id", "analyte", "fraction", "sampled_at", "lab", "batch", "value_ug_L", "detected",
           "detection_limit_ug_L"]


def _with_codes(frame: pd.DataFrame, key: dict[str, str]) -> pd.DataFrame:
    """``frame`` with each column of ``key`` (a categorical's integer codes, else itself) under its new name."""
    return frame.assign(**{new: frame[c].cat.codes if isinstance(frame[c].dtype, pd.CategoricalDtype) else frame[c]
                           for c, new in key.items()})


def dissolved_exceeds_total(results: pd.DataFrame, percent: float = 30.0, min_multiple: float = 5.0,
                            abs_multiple: float = 2.0) -> pd.DataFrame:
    """Samples whose dissolved result is above the total result by more than the allowed margin.

    Dissolved and total results of the same site, sample and analyte are paired. When both are
    detected and both above ``min_multiple`` × the detection limit, flagged if
    ``(D − T)/T × 100 > percent``; otherwise flagged if ``D − T > abs_multiple`` × the detection
    limit (the larger of the pair), a non-detect total taken at its detection limit. A non-detect
    dissolved result is never flagged. Both fractions get a retest row.

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results.
    percent : float
        Default 30 %.
    min_multiple : float
        Default 5.
    abs_multiple : float
        Default 2.

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``dissolved_exceeds_total``.

    Notes
    -----
    Dissolved metal cannot physically exceed total metal in the same sample; a difference beyond
    analytical precision points to contamination in filtration or a labelling error. The default
    margins are common practice (one published state data-review procedure uses these values).
    """
    res = results_from_screening(results)
    res = res[res["sample_type"].isin(["sample", "field_duplicate"])]
    res = res[[c for c in _PAIRED if c in res.columns]]  # what the details and rows need
    dis = res[res["fraction"].eq("dissolved") & res["detected"].astype(bool)]
    tot = res[res["fraction"].eq("total")]
    # paired on the integer codes of the text keys (the two sides share their categories): pandas would
    # first compare the categories, a million sample ids
    key = {c: f"_{c}" for c in ("site_id", "sample_id", "analyte")}
    pairs = _with_codes(dis, key).merge(_with_codes(tot, key), on=list(key.values()), suffixes=("_d", "_t"))
    if pairs.empty:
        return empty_retest()
    d, t = pairs["value_ug_L_d"], censored_value(pairs, "_t")
    dl = np.fmax(pairs["detection_limit_ug_L_d"], pairs["detection_limit_ug_L_t"])
    both_high = pairs["detected_t"].astype(bool) & (dl.isna() | ((d > min_multiple * dl) & (t > min_multiple * dl)))
    rel = (d - t) / t * 100
    by_rel = both_high & (rel > percent * (1 + RTOL))
    by_abs = ~both_high & ((d - t) > abs_multiple * dl * (1 + RTOL))
    flagged = flagged_text(pairs[by_rel | by_abs])
    if flagged.empty:
        return empty_retest()
    i = flagged.index
    rule = np.where(by_rel[i],
                    "dissolved above total by " + format_number(rel[i], 3) + " % > "
                    + format_number([percent])[0] + " % (both > " + format_number([min_multiple])[0]
                    + " × DL)",
                    "dissolved above total by " + ug((d - t)[i]) + " > "
                    + format_number([abs_multiple])[0] + " × DL " + ug(dl[i]))
    detail = ("dissolved " + shown(flagged, "_d") + ", total " + shown(flagged, "_t") + "; " + rule)
    flagged = flagged.assign(sampled_at=flagged["sampled_at_d"], fraction_d="dissolved", fraction_t="total")
    return _both_sides(flagged, "_d", "_t", detail, "dissolved_exceeds_total")


def holding_label(hold) -> str:
    """``6 months``, ``28 days``, ``24 hours``: a holding time in words."""
    if isinstance(hold, pd.DateOffset):
        months = hold.kwds.get("months", 0)
        return f"{months} months" if months else str(hold)
    td = pd.Timedelta(hold)
    if td % pd.Timedelta(days=1) == pd.Timedelta(0) and td >= pd.Timedelta(days=2):
        return f"{td.days} days"
    return f"{td / pd.Timedelta(hours=1):g} hours"


def holding_time_exceeded(results: pd.DataFrame, holding_times: dict | None = None) -> pd.DataFrame:
    """Results analysed after the end of their holding time.

    The deadline is ``sampled_at + holding time`` of the analyte (calendar months for a
    ``pandas.DateOffset``); flagged when ``analysed_at`` is later than the deadline (analysis
    exactly at the deadline is within time). Results without ``analysed_at`` are not checked.
    Site samples and field duplicates are checked.

    Parameters
    ----------
    results : pandas.DataFrame
        Accepted results with ``analysed_at``.
    holding_times : dict, optional
        Analyte → ``pandas.Timedelta`` or ``pandas.DateOffset``; key ``"*"`` for the rest.
        Default :data:`HOLDING_TIMES`.

    Returns
    -------
    pandas.DataFrame
        Retest rows, reason ``holding_time_exceeded``.

    References
    ----------
    [CFR40-136]_ (docs/references.md)
    """
    holds = dict(HOLDING_TIMES if holding_times is None else holding_times)
    default = holds.pop("*", None)
    res = results_from_screening(results)
    if "analysed_at" not in res.columns:
        return empty_retest()
    res = res[res["sample_type"].isin(["sample", "field_duplicate"]) & res["analysed_at"].notna()]
    parts = []
    groups = [(res["analyte"].eq(a), a, h) for a, h in holds.items()]
    if default is not None:
        groups.append((~res["analyte"].isin(list(holds)), None, default))
    for mask, _analyte, hold in groups:  # one vectorised pass per distinct holding time
        sub = res[mask]
        if sub.empty:
            continue
        deadline = sub["sampled_at"] + hold
        late = flagged_text(sub[sub["analysed_at"] > deadline])
        if late.empty:
            continue
        elapsed = (late["analysed_at"] - late["sampled_at"]) / pd.Timedelta(days=1)
        detail = ("analysed " + format_date(late["analysed_at"]).to_numpy() + ", "
                  + format_number(elapsed, 3).to_numpy() + " days after sampling; holding time for "
                  + late["analyte"] + " is " + holding_label(hold) + " (40 CFR 136.3 Table II)")
        parts.append(retest_rows(late, "holding_time_exceeded", detail))
    return pd.concat(parts, ignore_index=True) if parts else empty_retest()
