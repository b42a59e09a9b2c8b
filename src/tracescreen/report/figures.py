"""Per-metal charts for the report: results over time by site, non-detects at their detection limit,
and the applicable limits. Figures are plotly; plotly.js is inlined once by the report page.
"""

from __future__ import annotations

import html

import pandas as pd
import plotly.graph_objects as go
import plotly.io as pio
import plotly.offline

from tracescreen._internal.text import format_number
from tracescreen.retest.rows import results_from_screening, site_samples

#: The plotly configuration of every chart, in the report and in the dashboard: no plotly logo, and no
#: button that offers to send the chart to a third-party service (plotly.js shows its "send to cloud"
#: button unless ``showSendToCloud`` is false): monitoring data can be confidential, and the tool
#: works offline. The camera button saves a PNG at twice the screen resolution.
PLOTLY_CONFIG: dict = {
    "displaylogo": False,
    "showSendToCloud": False,
    "showEditInChartStudio": False,
    "modeBarButtonsToRemove": ["sendDataToCloud", "editInChartStudio"],
    "toImageButtonOptions": {"format": "png", "scale": 2},
    "responsive": True,
}

PALETTE = ["#1f5f8b", "#c2571a", "#2f7d32", "#8e2c6f", "#6b5b14", "#0f7c7c", "#a12a2a", "#4d4d9f",
           "#7a7a7a", "#b07d00"]


def plotly_script() -> str:
    """The plotly.js library text, to inline once in a page (escaped for a ``<script>`` element)."""
    return plotly.offline.get_plotlyjs().replace("</script", "<\\/script")


_VARYING_SYMBOLS = ["line-ew-open", "cross-thin-open", "x-thin-open", "line-ns-open"]


def _limit_traces(rows: pd.DataFrame, colour: dict) -> list[go.Scatter]:
    """Dashed lines for constant limits; for a limit that varies (hardness), a short mark at each
    sample in the site's colour."""
    lim = rows[rows["limit_ug_L"].notna()]
    if lim.empty:
        return []
    traces = []
    key = [k for k in ("limit_table", "duration", "use") if k in lim.columns]
    lim = lim.assign(**{k: lim[k].fillna("").astype(str) for k in key})
    x0, x1 = rows["sampled_at"].min(), rows["sampled_at"].max()
    varying = 0
    for (table, *rest), g in lim.groupby(key, sort=True):  # one trace per limit (a handful)
        label = " ".join([str(table)] + [str(r) for r in rest if r])
        values = g["limit_ug_L"].unique()
        if len(values) == 1:
            v = float(values[0])
            traces.append(go.Scatter(x=[x0, x1], y=[v, v], mode="lines", name=f"{label}: {format_number([v])[0]} µg/L",
                                     line=dict(dash="dash", width=1.5, color="#444"), hoverinfo="name"))
            continue
        symbol = _VARYING_SYMBOLS[varying % len(_VARYING_SYMBOLS)]
        varying += 1
        g = g.drop_duplicates(["site_id", "sampled_at", "limit_ug_L"])
        for i, (sid, gs) in enumerate(g.groupby("site_id", sort=True)):  # in each site's colour
            traces.append(go.Scatter(x=gs["sampled_at"], y=gs["limit_ug_L"], mode="markers",
                                     name=f"{label} (hardness-dependent, site colour)", legendgroup=label,
                                     showlegend=i == 0, hovertemplate=f"{sid} {label}: %{{y}} µg/L",
                                     marker=dict(symbol=symbol, size=9, color=colour.get(sid, "#444"))))
    return traces


def analyte_figures(screening: pd.DataFrame) -> list[tuple[str, str, go.Figure]]:
    """One figure per analyte and fraction of the site-sample results.

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (QC samples are left out).

    Returns
    -------
    list of (analyte, fraction, plotly.graph_objects.Figure)
        Values in µg/L on a log axis: filled circles detected, open down-triangles non-detects at the
        detection limit, dashed lines limits.
    """
    site = site_samples(screening)
    if site.empty:
        return []
    res = results_from_screening(site)
    sites = sorted(res["site_id"].unique())
    colour = {s: PALETTE[i % len(PALETTE)] for i, s in enumerate(sites)}
    out = []
    for (analyte, fraction), g in res.groupby(["analyte", "fraction"], sort=True):
        fig = go.Figure()
        for sid, s in g.groupby("site_id", sort=True):  # one trace pair per site
            det = s[s["detected"].astype(bool)]
            nd = s[~s["detected"].astype(bool)]
            c = colour[sid]
            fig.add_trace(go.Scatter(x=det["sampled_at"], y=det["value_ug_L"], mode="markers", name=str(sid),
                                     legendgroup=str(sid), marker=dict(color=c, size=6),
                                     text=det["sample_id"], hovertemplate="%{text}<br>%{x|%Y-%m-%d}: %{y} µg/L"))
            if not nd.empty:
                fig.add_trace(go.Scatter(x=nd["sampled_at"], y=nd["detection_limit_ug_L"], mode="markers",
                                         name=f"{sid} non-detect", legendgroup=str(sid), showlegend=True,
                                         marker=dict(color=c, size=7, symbol="triangle-down-open"),
                                         text=nd["sample_id"],
                                         hovertemplate="%{text}<br>%{x|%Y-%m-%d}: &lt;%{y} µg/L (non-detect)"))
        rows = site[site["analyte"].eq(analyte) & site["fraction"].eq(fraction)]
        for t in _limit_traces(rows, colour):
            fig.add_trace(t)
        fig.update_layout(template="none", height=380, margin=dict(l=60, r=20, t=40, b=40),
                          title=dict(text=f"{analyte} ({fraction})", x=0.01),
                          yaxis=dict(type="log", title=dict(text="µg/L"), gridcolor="#e5e7eb"),
                          xaxis=dict(gridcolor="#e5e7eb"), legend=dict(font=dict(size=10)))
        out.append((analyte, fraction, fig))
    return out


def figure_divs(figures: list[tuple[str, str, go.Figure]]) -> str:
    """HTML ``<div>`` elements of the figures (plotly.js is expected on the page already)."""
    parts = []
    for analyte, fraction, fig in figures:
        div_id = "chart-" + "".join(ch if ch.isalnum() else "-" for ch in f"{analyte}-{fraction}")
        parts.append(f'<div class="chart" data-analyte="{html.escape(analyte, quote=True)}" '
                     f'data-fraction="{html.escape(fraction, quote=True)}">'
                     + pio.to_html(fig, include_plotlyjs=False, full_html=False, div_id=div_id,
                                   config=PLOTLY_CONFIG,
                                   default_height="380px")
                     + "</div>")
    return "\n".join(parts)
