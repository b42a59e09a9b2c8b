"""The statistical design in words, as a report must state it.

The Unified Guidance asks that a monitoring report state the statistical design behind each test:
the site-wide false positive rate and how it is shared, the retest plan, the multipliers, the
background used and its checks, how non-detects were handled and which distributions were
assumed (USEPA 2009, ch. 2-6 [usepa2009]_). :func:`design_statement` writes those statements from
the tables of :func:`.run.well_statistics`, one row per topic, for the report, the dashboard and
``tracescreen wells``.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 2-6 and 19.
"""

from __future__ import annotations

import pandas as pd

from tracescreen.caution import CAUTION

TOPICS = ("Design", "Retesting", "Multipliers", "Background", "Interwell or intrawell", "Distributions",
          "Non-detects", "Outliers and trends", "Control charts", "Tolerance limits",
          "Confidence limits against standards", "Caution")


def _count(series: pd.Series) -> str:
    counts = series.value_counts()
    return ", ".join(f"{n} {k.replace('_', ' ')}" for k, n in counts.items()) or "none"


def design_statement(tables: dict[str, pd.DataFrame]) -> pd.DataFrame:
    """One row per topic (:data:`TOPICS`): ``topic, statement``."""
    d = dict(zip(tables["design"]["setting"], tables["design"]["value"]))
    lim = tables["prediction_limits"]
    bg = tables["background"]
    param = lim[lim["kappa"].notna()]
    npm = lim[lim["method"] == "nonparametric"]
    out = {}
    out["Design"] = (
        f"Annual site-wide false positive rate (SWFPR) {float(d['swfpr']):.3g}, shared over "
        f"{d['wells_in_design']} compliance well(s) x {d['constituents_in_design']} constituent(s) "
        f"(constituents never detected in background excluded), {d['evaluations_per_year']} evaluations a "
        f"year: per-test confidence (1 - SWFPR)^(1/(wells x constituents)) = {float(d['per_test_confidence']):.6f}; "
        f"non-parametric limits, shared by the wells of a constituent, target a per-constituent false "
        f"positive rate of {float(d['per_constituent_alpha']):.4g} over wells x evaluations comparisons.")
    out["Retesting"] = (
        f"Parametric limits use the {d['plan']} plan; non-parametric limits the first of "
        f"{d['nonparametric_plans']} (and the highest background rank up to the 3rd) whose achieved rate "
        f"meets the target. An initial exceedance needs a resample within one evaluation interval; "
        f"only a failed plan is a confirmed exceedance.")
    if len(param):
        ks = param.drop_duplicates(["n_background", "df"])[["n_background", "df", "kappa"]].sort_values("n_background")
        shown = "; ".join(f"n = {int(r.n_background)}, {r.df:g} df: {r.kappa:.4f}" for r in ks.head(8).itertuples())
        more = f" (and {len(ks) - 8} more)" if len(ks) > 8 else ""
        out["Multipliers"] = (f"kappa computed from the Davis-McNichols integral for the plan over the year's "
                              f"evaluations, once per distinct background size and degrees of freedom: {shown}{more}.")
    else:
        out["Multipliers"] = "No parametric prediction limit was computed."
    window = f"{d.get('background_from') or 'the first result'} to {d.get('background_to') or 'the last'}"
    inter = bg[bg["kind"] == "interwell"]
    few = int((bg["n"] < int(d["min_background"])).sum())
    out["Background"] = (
        f"Background window {window} (wells may set their own). {len(inter)} well-group background sets "
        f"from background wells; compliance wells' own baselines for intrawell limits. Background sets "
        f"with fewer than {d['min_background']} values: {few}.")
    out["Interwell or intrawell"] = (
        f"{_count(lim['comparison'])}. Where the design leaves it open, background wells were tested for "
        f"spatial variability (one-way ANOVA, or Kruskal-Wallis above 15 % non-detects, alpha "
        f"{d['alpha_checks']}): intrawell where they differ. Intrawell wells of a group share one scale, "
        f"and a pooled standard deviation where Levene's test allows ({int(lim['sd_pooled'].sum())} limits).")
    out["Distributions"] = (
        f"Shapiro-Wilk on the values and their logarithms at alpha {d['alpha_checks']}: normal if the values "
        f"pass, else lognormal if the logarithms pass, else non-parametric. Limits: {_count(lim['method'])}.")
    out["Non-detects"] = (
        "A non-detect is never an exceedance. Up to 50 % non-detects: Kaplan-Meier mean and standard "
        "deviation; above 50 %: an order statistic of background with its achieved false positive rate"
        + (f" ({len(npm)} limits, achieved rates {npm['achieved_false_positive_rate'].min():.3g} to "
           f"{npm['achieved_false_positive_rate'].max():.3g})" if len(npm) else "")
        + "; never detected: the Double Quantification Rule (two consecutive quantified results). "
        "A compliance non-detect whose detection limit is above the limit is inconclusive.")
    out["Outliers and trends"] = (
        f"Background screened with Dixon's (n <= 25) or Rosner's test: {int((bg['outliers'].fillna('') != '').sum())} "
        f"sets with possible outliers, reported and kept. Mann-Kendall trends in background: "
        f"{int((bg['trend'] != 'none').sum())} sets (background with a trend is not stationary).")
    out["Control charts"] = (
        f"Combined Shewhart-CUSUM on each well's own baseline: k = {d['control_chart_k']}, h = {d['control_chart_h']}, "
        f"SCL = {d['control_chart_scl']} (standard deviations), with a resample charted in place of an "
        f"out-of-control point.")
    out["Tolerance limits"] = (
        f"Upper tolerance limits at {float(d['tolerance_coverage']):.0%} coverage and "
        f"{float(d['tolerance_confidence']):.0%} confidence (parametric), or the background maximum with "
        f"its achieved coverage.")
    out["Confidence limits against standards"] = (
        f"One-sided {float(d['ci_level']):.0%} limits of the {d['ci_parameter']} of the last {d['ci_last_n']} compliance "
        f"values; a trend-line band where Mann-Kendall finds a trend. Assessment: exceedance when the lower "
        f"limit is above the standard; corrective action: success when the upper limit is below it.")
    out["Caution"] = "These statistics support, and do not replace, the regulator's decision. " + CAUTION
    return pd.DataFrame({"topic": list(TOPICS), "statement": [out[t] for t in TOPICS]})
