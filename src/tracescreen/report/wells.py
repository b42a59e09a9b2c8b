"""The report's section on monitoring wells against background and fixed standards.

It states the statistical design first, as the Unified Guidance asks a report to (USEPA 2009,
ch. 2-6): the design statement of :mod:`tracescreen.statistics.background.statement`; then each
compliance well's status over its retest sequence, the prediction limits with their inputs, the
confidence limits against standards, and charts of the wells that need attention (an initial or
confirmed exceedance of background, or a lower confidence limit above a standard). The section's
blocks are built by :func:`tracescreen.report.appendices.wells_section`; the design statement is in
the report's appendix on the statistical design.
"""

from __future__ import annotations

import pandas as pd

from tracescreen.report.tables import only_sites

#: Charts drawn at most (wells needing attention first).
MAX_CHARTS = 24

STATUS_COLUMNS = ["site_id", "analyte", "fraction", "comparison", "method", "plan", "limit_ug_L",
                  "n_evaluations", "n_initial_exceedances", "n_confirmed_exceedances", "n_resamples_missing",
                  "latest_status", "latest_sampled"]
LIMIT_COLUMNS = ["site_id", "analyte", "fraction", "comparison", "comparison_reason", "background_source",
                 "n_background", "percent_nondetect", "distribution", "mean", "sd", "df", "sd_pooled", "kappa",
                 "rank_from_top", "limit_ug_L", "design_false_positive_rate", "achieved_false_positive_rate",
                 "power_3sd", "limit_notes"]
CI_COLUMNS = ["site_id", "analyte", "fraction", "stage", "limit_table", "standard_ug_L", "standard_basis", "n",
              "parameter", "method", "lcl_ug_L", "ucl_ug_L", "confidence", "achieved_confidence", "decision",
              "ucl_below_standard_from", "ci_notes"]


def wells_tables(wells: dict, site_ids=None) -> dict[str, pd.DataFrame]:
    """The report's wells tables by name (``wells_design``, ``wells_status``, ``wells_limits``,
    ``wells_confidence``), restricted to ``site_ids`` where given."""
    return {
        "wells_design": wells["design_statement"],
        "wells_status": only_sites(wells["well_status"], site_ids)[STATUS_COLUMNS].reset_index(drop=True),
        "wells_limits": only_sites(wells["prediction_limits"], site_ids)[LIMIT_COLUMNS].reset_index(drop=True),
        "wells_confidence": only_sites(wells["confidence_limits"], site_ids)[CI_COLUMNS].reset_index(drop=True),
    }


def attention(wells: dict, site_ids=None) -> pd.DataFrame:
    """Compliance series needing attention, worst first: confirmed, then initial exceedances of
    background, then lower confidence limits above a standard."""
    keys = ["site_id", "analyte", "fraction"]
    st = only_sites(wells["well_status"], site_ids)
    ci = only_sites(wells["confidence_limits"], site_ids)
    rank = pd.concat([
        st.loc[st["n_confirmed_exceedances"] > 0, keys].assign(rank=0),
        st.loc[st["latest_status"].isin(["initial_exceedance", "resample_required"]), keys].assign(rank=1),
        ci.loc[ci["decision"] == "exceeds", keys].assign(rank=2),
    ])
    return rank.sort_values(["rank"] + keys).drop_duplicates(keys).reset_index(drop=True)
