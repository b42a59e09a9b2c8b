"""Prediction limits with retesting for every compliance well and constituent.

The flow follows the Unified Guidance (USEPA 2009, ch. 6, 13, 19 [usepa2009]_):

1. **interwell or intrawell**: for each well group and constituent the background wells are
   tested for spatial variability (:func:`.checks.spatial_variability`); where they differ
   (``p < alpha_checks``) each compliance well is compared with its own baseline (intrawell),
   otherwise with the group's pooled background (interwell). A well or design may fix the choice.
2. **background checks** and the method (:func:`.checks.describe_sets`): normal or lognormal
   parametric limit ``x̄ + kappa s``; non-parametric order statistic with more than 50 %
   non-detects or no fitting distribution; the Double Quantification Rule for a constituent never
   detected in background.
3. **intrawell pooling**: parametric intrawell wells of a group share a pooled standard deviation
   (more degrees of freedom, a smaller kappa) when Levene's test finds equal variances.
4. **the design**: per-test confidence from the SWFPR over wells x constituents; kappa computed
   once per distinct (n, df) (:func:`.kappa.kappa_table`); non-parametric limits take the first
   candidate plan and rank whose achieved false positive rate meets the per-constituent target.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 6, 13 and 19.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

from .checks import choose_distribution, describe_sets, pooled_sd, spatial_variability
from .data import CONSTITUENT, SERIES, compliance_rows_for
from .design import Design
from .kappa import kappa_table, per_constituent_alpha, per_test_confidence
from .nonparametric import background_needed, choose_rank, order_statistic
from .plans import RetestPlan

LIMIT_COLUMNS = SERIES + [
    "well_group", "stage", "comparison", "comparison_reason", "background_source", "n_background",
    "n_detected", "percent_nondetect", "distribution", "nd_method", "mean", "sd", "df", "sd_pooled",
    "method", "plan", "kappa", "rank_from_top", "limit_ug_L", "limit_is_detection_limit",
    "per_test_confidence", "design_false_positive_rate", "achieved_false_positive_rate",
    "evaluations_covered", "power_3sd", "power_4sd", "limit_notes"]

DQR_PLAN = RetestPlan("k-of-m", 1, 2)


def _spatial(bg_rows: pd.DataFrame, bg_sets: pd.DataFrame, codes: np.ndarray) -> pd.DataFrame:
    if bg_sets.empty:
        return bg_sets.assign(spatial_test=pd.Series(dtype=object), spatial_statistic=pd.Series(dtype=float),
                              spatial_p=pd.Series(dtype=float), n_background_wells=pd.Series(dtype=float))
    tests = []
    for i, s in bg_sets.iterrows():  # one test per well group x constituent
        mask = codes == i
        r = spatial_variability(bg_rows["value"].to_numpy(float)[mask], bg_rows["nondetect"].to_numpy(bool)[mask],
                                bg_rows["site_id"].to_numpy()[mask], s["distribution"] == "lognormal")
        tests.append({"spatial_test": r["test"], "spatial_statistic": r["statistic"], "spatial_p": r["p_value"],
                      "n_background_wells": r["n_wells"]})
    return pd.concat([bg_sets, pd.DataFrame(tests, index=bg_sets.index)], axis=1)


def _choose_comparison(series: pd.DataFrame, groups: pd.DataFrame, design: Design) -> pd.DataFrame:
    s = series.merge(groups[["well_group"] + CONSTITUENT + ["spatial_p", "spatial_test", "n"]],
                     on=["well_group"] + CONSTITUENT, how="left")
    has_bg = s["n"].fillna(0) >= 2
    differ = s["spatial_p"] < design.alpha_checks
    auto = s["comparison"] == "auto"
    comp = np.where(auto, np.where(has_bg & ~differ, "interwell", "intrawell"), s["comparison"])
    reason = np.where(~auto, "set by the network or design",
                      np.where(~has_bg, "no background wells for this constituent in the group",
                               np.where(differ, "background wells differ (spatial variability)",
                                        np.where(s["spatial_test"].fillna("") == "",
                                                 "too few background wells to test spatial variability",
                                                 "background wells do not differ"))))
    forced = (comp == "interwell") & ~has_bg
    comp = np.where(forced, "intrawell", comp)
    reason = np.where(forced, "interwell asked, but no background data: intrawell", reason)
    return s.drop(columns=["spatial_p", "spatial_test", "n"]).assign(comparison=comp, comparison_reason=reason)


def _pool(limits: pd.DataFrame, base_rows: pd.DataFrame, base_codes: np.ndarray, design: Design) -> pd.DataFrame:
    """Intrawell wells of a group and constituent on one scale, with a pooled SD where Levene's
    test allows (USEPA 2009, Example 19-2).

    Parametric intrawell wells without non-detects share their distribution, chosen by
    Shapiro-Wilk on the pooled residuals (each value minus its well's mean) on the original and
    the log scale: a few baseline values per well cannot choose it alone.
    """
    limits = limits.assign(df=limits["n_background"] - 1.0, sd_pooled=False)
    intra = limits.index[(limits["comparison"] == "intrawell") & limits["distribution"].isin(["normal", "lognormal"])
                         & (limits["percent_nondetect"] == 0)]
    x_all = base_rows["value"].to_numpy(float)
    for _, idx in limits.loc[intra].groupby(["well_group"] + CONSTITUENT).groups.items():
        if len(idx) < 2:
            continue
        groups = [x_all[base_codes == limits.at[i, "set_code"]] for i in idx]
        resid = [np.concatenate([g - g.mean() for g in gs]) for gs in (groups, [np.log(g) for g in groups])]
        p_raw, p_log = (stats.shapiro(r).pvalue if len(r) >= 3 and np.ptp(r) > 0 else np.nan for r in resid)
        dist = choose_distribution(p_raw, p_log, 0.0, 1, design.alpha_checks)
        if dist not in ("normal", "lognormal"):
            continue
        scaled = [np.log(g) if dist == "lognormal" else g for g in groups]
        limits.loc[idx, "distribution"] = dist
        limits.loc[idx, "mean"] = [g.mean() for g in scaled]
        limits.loc[idx, "sd"] = [g.std(ddof=1) if len(g) > 1 else np.nan for g in scaled]
        p = pooled_sd(scaled, design.alpha_checks)
        if p["pooled"]:
            limits.loc[idx, "sd"] = p["sd"]
            limits.loc[idx, "df"] = p["df"]
            limits.loc[idx, "sd_pooled"] = True
            limits.loc[idx, "limit_notes"] += (f"{dist} scale chosen on residuals pooled over {len(groups)} wells; "
                                               f"SD pooled (Levene p = {p['levene_p']:.3g}, {p['df']:.0f} df); ")
    return limits


def prediction_limits(rows: pd.DataFrame, series: pd.DataFrame, design: Design) -> dict[str, pd.DataFrame]:
    """Background checks and prediction limits.

    Parameters
    ----------
    rows : DataFrame
        :func:`.data.monitoring_rows`.
    series : DataFrame
        :func:`.data.series_table`.

    Returns
    -------
    dict
        ``limits`` (one row per compliance series, :data:`LIMIT_COLUMNS`), ``background`` (one row
        per background set with its checks), ``design`` (the design's derived numbers) and
        ``compliance_rows`` (``rows`` with each series' compliance data for its comparison,
        :func:`.data.compliance_rows_for`).
    """
    n_wells = design.compliance_wells or max(series["site_id"].nunique(), 1)
    r = design.evaluations_per_year

    bg_rows = rows[rows["period"] == "background"].reset_index(drop=True)
    gkeys = ["well_group"] + CONSTITUENT
    bg_codes = bg_rows.groupby(gkeys, sort=True).ngroup().to_numpy() if len(bg_rows) else np.zeros(0, int)
    bg_keys = bg_rows[gkeys].drop_duplicates().sort_values(gkeys).reset_index(drop=True)
    groups = pd.concat([bg_keys, describe_sets(bg_rows, bg_codes, len(bg_keys), design)], axis=1)
    groups = _spatial(bg_rows, groups, bg_codes)
    chosen = _choose_comparison(series, groups, design)

    base_rows = rows[rows["period"] == "baseline"].reset_index(drop=True)
    base_codes = base_rows.groupby(SERIES, sort=True).ngroup().to_numpy() if len(base_rows) else np.zeros(0, int)
    base_keys = base_rows[SERIES].drop_duplicates().sort_values(SERIES).reset_index(drop=True)
    wells = pd.concat([base_keys, describe_sets(base_rows, base_codes, len(base_keys), design)], axis=1)

    inter = chosen[chosen["comparison"] == "interwell"].merge(
        groups.assign(set_code=np.arange(len(groups))), on=gkeys, how="left")
    inter["background_source"] = "group " + inter["well_group"]
    intr = chosen[chosen["comparison"] == "intrawell"].merge(
        wells.assign(set_code=np.arange(len(wells))), on=SERIES, how="left")
    intr["background_source"] = "own baseline"
    lim = pd.concat([inter, intr], ignore_index=True).rename(columns={"n": "n_background"})
    lim["n_background"] = lim["n_background"].fillna(0).astype(int)
    lim["distribution"] = lim["distribution"].fillna("none")
    lim["limit_notes"] = lim["check_notes"].fillna("").map(lambda t: t + "; " if t else "")
    lim = _pool(lim, base_rows, base_codes, design)
    # constituents never detected in background follow the Double Quantification Rule and do not
    # count against the SWFPR (USEPA 2009, §6.2.2)
    tested = lim.loc[~lim["distribution"].isin(["dqr", "none"]), CONSTITUENT].drop_duplicates()
    n_const = design.constituents or max(len(tested), 1)
    conf = per_test_confidence(design.swfpr, n_wells, n_const)
    alpha_c = per_constituent_alpha(design.swfpr, n_const)

    param = lim["distribution"].isin(["normal", "lognormal"]) & (lim["n_background"] >= 2)
    k = kappa_table(pd.DataFrame({"n": lim.loc[param, "n_background"], "df": lim.loc[param, "df"],
                                  "confidence": conf}), design.plan, r)
    lim["kappa"] = np.nan
    lim.loc[param, "kappa"] = k["kappa"].to_numpy()
    lim.loc[param, "power_3sd"] = k["power_3sd"].to_numpy()
    lim.loc[param, "power_4sd"] = k["power_4sd"].to_numpy()
    raw = lim["mean"].astype(float) + lim["kappa"] * lim["sd"].astype(float)
    lim["limit_ug_L"] = np.where(lim["distribution"] == "lognormal", np.exp(raw), raw)
    lim["method"] = np.where(param, "parametric_" + lim["distribution"], lim["distribution"])
    lim["plan"] = np.where(param, design.plan.label, "")
    lim["plan_object"] = pd.Series([design.plan if p else None for p in param], index=lim.index, dtype=object)
    lim["per_test_confidence"] = np.where(param, conf, np.nan)
    lim["design_false_positive_rate"] = np.where(param, 1 - conf, np.nan)
    lim["evaluations_covered"] = np.where(param, r, 0)
    lim["rank_from_top"] = 0
    lim["limit_is_detection_limit"] = False
    lim["achieved_false_positive_rate"] = np.nan
    lim = _nonparametric(lim, bg_rows, bg_codes, base_rows, base_codes, design, n_wells, conf, alpha_c)
    dqr = lim["distribution"] == "dqr"
    lim.loc[dqr, "method"] = "double_quantification"
    lim.loc[dqr, "plan"] = DQR_PLAN.label
    lim.loc[dqr, "plan_object"] = pd.Series([DQR_PLAN] * int(dqr.sum()), index=lim.index[dqr], dtype=object)
    lim.loc[dqr, "limit_notes"] += ("never detected in background: an exceedance is a quantified result "
                                    "confirmed by a quantified resample (not counted in the SWFPR); ")
    compliance = compliance_rows_for(rows, chosen)
    lim = _detection_limit_notes(lim, compliance)
    none = lim["distribution"] == "none"
    lim.loc[none, "method"] = "none"
    lim.loc[none, "limit_notes"] += "no background values: no limit; "
    lim["limit_notes"] = lim["limit_notes"].str.rstrip("; ")
    background = pd.concat([groups.assign(kind="interwell", site_id=""),
                            wells.assign(kind="intrawell", well_group="")], ignore_index=True)
    design_row = {"swfpr": design.swfpr, "wells_in_design": n_wells, "constituents_in_design": n_const,
                  "evaluations_per_year": r, "plan": design.plan.label,
                  "per_test_confidence": conf, "per_constituent_alpha": alpha_c,
                  "nonparametric_plans": ", ".join(p.label for p in design.nonparametric_plans),
                  "distinct_kappa_designs": int(len(k[["n", "df"]].drop_duplicates())) if len(k) else 0}
    return {"limits": lim.sort_values(SERIES)[LIMIT_COLUMNS + ["set_code", "plan_object"]].reset_index(drop=True),
            "background": background, "design": pd.DataFrame([design_row]), "compliance_rows": compliance}


def _nonparametric(lim, bg_rows, bg_codes, base_rows, base_codes, design, n_wells, conf, alpha_c):
    npm = lim.index[lim["distribution"] == "nonparametric"]
    for i in npm:  # a handful of distinct designs; each achieved rate is cached
        interwell = lim.at[i, "comparison"] == "interwell"
        rows, codes = (bg_rows, bg_codes) if interwell else (base_rows, base_codes)
        mask = codes == lim.at[i, "set_code"]
        x, nd = rows["value"].to_numpy(float)[mask], rows["nondetect"].to_numpy(bool)[mask]
        n = len(x)
        r = design.evaluations_per_year * (n_wells if interwell else 1)
        target = alpha_c if interwell else 1 - conf
        pick = None
        for plan in design.nonparametric_plans:
            rank, achieved = choose_rank(n, plan, r, target)
            if achieved <= target:
                pick = (plan, rank, achieved)
                break
        if pick is None:
            scores = [(choose_rank(n, p, r, target)[1], p) for p in design.nonparametric_plans]
            achieved, plan = min(scores, key=lambda s: s[0])
            pick = (plan, 1, achieved)
            need = background_needed(plan, r, target)
            lim.at[i, "limit_notes"] += (f"no candidate plan meets the target rate {target:.3g} with {n} background "
                                         f"values ({need or 'over 2000'} needed with {plan.label}); ")
        plan, rank, achieved = pick
        order = np.argsort(x, kind="stable")
        top = order[-rank] if 1 <= rank <= n else None
        lim.at[i, "limit_ug_L"] = order_statistic(x, rank)
        lim.at[i, "limit_is_detection_limit"] = bool(nd[top]) if top is not None else False
        lim.at[i, "rank_from_top"] = rank
        lim.at[i, "plan"] = plan.label
        lim.at[i, "plan_object"] = plan
        lim.at[i, "achieved_false_positive_rate"] = achieved
        lim.at[i, "design_false_positive_rate"] = target
        lim.at[i, "evaluations_covered"] = r
        lim.at[i, "method"] = "nonparametric"
    return lim


def _detection_limit_notes(lim: pd.DataFrame, rows: pd.DataFrame) -> pd.DataFrame:
    """Warn where compliance results are detected below the lowest detection limit of their
    background: background could not have shown such values (a changed method, not a change in
    the water, may then trigger the Double Quantification Rule or a non-parametric limit)."""
    look = lim["method"].isin(["double_quantification", "nonparametric"])
    if not look.any():
        return lim
    nd = rows[rows["nondetect"]]
    inter = nd[(nd["period"] == "background") & (nd["role"] == "background")].groupby(
        ["well_group"] + CONSTITUENT)["value"].min().rename("low_inter")
    intra = nd[nd["period"] == "baseline"].groupby(SERIES)["value"].min().rename("low_intra")
    s = lim.loc[look, SERIES + ["well_group", "comparison"]].join(
        inter, on=["well_group"] + CONSTITUENT).join(intra, on=SERIES)
    s["low"] = np.where(s["comparison"] == "interwell", s["low_inter"], s["low_intra"])
    det = rows[(rows["period"] == "compliance") & ~rows["nondetect"]][SERIES + ["value"]]
    det = det.merge(s[SERIES + ["low"]].dropna(), on=SERIES)
    below = det[det["value"] < det["low"]].groupby(SERIES).size().rename("below")
    s = s.join(below, on=SERIES)
    hit = s["below"].fillna(0) > 0
    for i, n, low in zip(s.index[hit], s.loc[hit, "below"], s.loc[hit, "low"]):  # only the warned series
        lim.at[i, "limit_notes"] += (f"{int(n)} compliance result(s) detected below the lowest background detection "
                                     f"limit ({low:.3g} µg/L): a lower detection limit, not the water, may explain "
                                     f"them; consider renewing background with the current method; ")
    return lim
