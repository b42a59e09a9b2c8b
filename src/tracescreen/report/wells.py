"""The report's section on monitoring wells against background and fixed standards.

It states the statistical design first, as the Unified Guidance asks a report to (USEPA 2009,
ch. 2-6): the design statement of :mod:`tracescreen.statistics.background.statement`; then each
compliance well's status over its retest sequence, the prediction limits with their inputs, the
confidence limits against standards, and charts of the wells that need attention (an initial or
confirmed exceedance of background, or a lower confidence limit above a standard).
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


def _figure_div(fig, key: str) -> str:
    import html

    import plotly.io as pio

    div_id = "well-chart-" + "".join(ch if ch.isalnum() else "-" for ch in key)
    return (f'<div class="well-chart" data-series="{html.escape(key, quote=True)}">'
            + pio.to_html(fig, include_plotlyjs=False, full_html=False, div_id=div_id,
                          config={"displaylogo": False, "responsive": True}, default_height="560px") + "</div>")


def wells_section_html(wells: dict, site_ids, table_html) -> str:
    """The section's HTML (``table_html`` is the report's own table renderer; plotly.js is on the page)."""
    from tracescreen.report.well_figures import well_figure

    t = wells_tables(wells, site_ids)
    need = attention(wells, site_ids)
    figures = "\n".join(_figure_div(well_figure(wells, r.site_id, r.analyte, r.fraction),
                                     f"{r.site_id} {r.analyte} {r.fraction}") for r in need.head(MAX_CHARTS).itertuples())
    more = (f"<p>{len(need) - MAX_CHARTS} more wells need attention; see the tables.</p>"
            if len(need) > MAX_CHARTS else "")
    return (
        "<p>Statistics of monitoring wells against background and fixed standards after the US EPA Unified "
        "Guidance (EPA 530-R-09-007, 2009). They support, and do not replace, the regulator's decision.</p>"
        "<h3>Statistical design</h3>" + table_html(t["wells_design"], "wells-design-table")
        + "<h3>Status over the retest sequence</h3>" + table_html(t["wells_status"], "wells-status-table")
        + "<h3>Wells needing attention</h3>"
        + (figures + more if figures else '<p class="none">No well needs attention.</p>')
        + "<h3>Prediction limits and their inputs</h3>" + table_html(t["wells_limits"], "wells-limits-table")
        + "<h3>Confidence limits against standards</h3>"
        + (table_html(t["wells_confidence"], "wells-confidence-table") if len(t["wells_confidence"])
           else '<p class="none">No standard applies to the compliance wells (give --limits).</p>'))
