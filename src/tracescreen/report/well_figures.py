"""The chart of one well and constituent against its background: background values, the
prediction limit, each compliance value coloured and shaped by its status over the retest
sequence, and below it the well's Shewhart-CUSUM control chart. Used by the report and the
dashboard (same figure). Non-detects are drawn open at their detection limit.
"""

from __future__ import annotations

import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from tracescreen.vocabulary import SEQUENCE_COLOUR, SEQUENCE_LABEL, SEQUENCE_STATUSES, SEQUENCE_SYMBOL

BACKGROUND_COLOUR = "#7A7A7A"


def _pick(frame: pd.DataFrame, site_id: str, analyte: str, fraction: str) -> pd.DataFrame:
    if frame is None or frame.empty:
        return frame
    return frame[(frame["site_id"] == site_id) & (frame["analyte"] == analyte) & (frame["fraction"] == fraction)]


def background_points(tables: dict, site_id: str, analyte: str, fraction: str) -> pd.DataFrame:
    """The background values behind a compliance series' limit (the group's background wells for
    an interwell limit, the well's own baseline for an intrawell one)."""
    data = tables["well_data"]
    lim = _pick(tables["prediction_limits"], site_id, analyte, fraction)
    if lim.empty:
        return data.iloc[:0]
    row = lim.iloc[0]
    same = (data["analyte"] == analyte) & (data["fraction"] == fraction)
    if row["comparison"] == "interwell":
        return data[same & (data["period"] == "background") & (data["well_group"] == row["well_group"])]
    return data[same & (data["period"] == "baseline") & (data["site_id"] == site_id)]


def well_figure(tables: dict, site_id: str, analyte: str, fraction: str) -> go.Figure:
    """Background, limit, retest sequence and control chart of one compliance series."""
    chart = _pick(tables["control_charts"], site_id, analyte, fraction)
    rows = 2 if chart is not None and len(chart) else 1
    fig = make_subplots(rows=rows, cols=1, shared_xaxes=True, vertical_spacing=0.08,
                        row_heights=[0.65, 0.35][:rows] if rows == 2 else [1.0],
                        subplot_titles=(["Against background (µg/L)", "Control chart (standard deviations)"][:rows]))
    bg = background_points(tables, site_id, analyte, fraction)
    for nd, name in ((False, "background"), (True, "background, not detected (at DL)")):
        part = bg[bg["nondetect"] == nd]
        if len(part):
            fig.add_trace(go.Scatter(
                x=part["sampled_at"], y=part["value_ug_L"], mode="markers", name=name,
                marker=dict(color=BACKGROUND_COLOUR, symbol="circle-open" if nd else "circle", size=7),
                customdata=part["site_id"], hovertemplate="%{customdata} %{x|%Y-%m-%d}: %{y} µg/L"), row=1, col=1)
    lim = _pick(tables["prediction_limits"], site_id, analyte, fraction)
    seq = _pick(tables["retest_sequence"], site_id, analyte, fraction)
    if len(lim) and pd.notna(lim.iloc[0]["limit_ug_L"]):
        r = lim.iloc[0]
        xs = pd.concat([bg["sampled_at"], seq["sampled_at"]]) if len(seq) else bg["sampled_at"]
        if len(xs):
            fig.add_trace(go.Scatter(
                x=[xs.min(), xs.max()], y=[r["limit_ug_L"]] * 2, mode="lines",
                name=f"prediction limit {r['limit_ug_L']:.4g} µg/L ({r['method'].replace('_', ' ')}, {r['plan']})",
                line=dict(dash="dash", color="#333", width=1.5), hoverinfo="name"), row=1, col=1)
    for status in SEQUENCE_STATUSES:
        part = seq[seq["status"] == status]
        if len(part):
            fig.add_trace(go.Scatter(
                x=part["sampled_at"], y=part["compared_value_ug_L"], mode="markers",
                name=SEQUENCE_LABEL[status],
                marker=dict(color=SEQUENCE_COLOUR[status], symbol=SEQUENCE_SYMBOL[status], size=10,
                            line=dict(width=2, color=SEQUENCE_COLOUR[status])),
                customdata=part[["evaluation", "position"]].to_numpy(),
                hovertemplate="%{x|%Y-%m-%d}: %{y} µg/L, evaluation %{customdata[0]}, value %{customdata[1]}"),
                row=1, col=1)
    if rows == 2:
        fig.add_trace(go.Scatter(x=chart["sampled_at"], y=chart["z"], mode="lines+markers", name="standardised value z",
                                 line=dict(color="#1f5f8b")), row=2, col=1)
        fig.add_trace(go.Scatter(x=chart["sampled_at"], y=chart["cusum"], mode="lines+markers", name="CUSUM",
                                 line=dict(color="#8e2c6f", dash="dot")), row=2, col=1)
        x0, x1 = chart["sampled_at"].min(), chart["sampled_at"].max()
        for level, name, dash in ((chart["h"].iloc[0], "CUSUM decision interval h", "dash"),
                                  (chart["scl"].iloc[0], "Shewhart limit", "dot")):
            fig.add_trace(go.Scatter(x=[x0, x1], y=[level, level], mode="lines", name=f"{name} = {level:g}",
                                     line=dict(dash=dash, width=1, color="#444"), hoverinfo="name"), row=2, col=1)
        out = chart[chart["status"].isin(["resample_required", "confirmed_out_of_control"])]
        if len(out):
            fig.add_trace(go.Scatter(x=out["sampled_at"], y=out["z"], mode="markers", name="out of control",
                                     marker=dict(symbol="x", size=11, color=SEQUENCE_COLOUR["confirmed_exceedance"])),
                          row=2, col=1)
    fig.update_layout(title=f"{site_id}: {analyte} ({fraction})", template="plotly_white", height=360 + 200 * (rows - 1),
                      legend=dict(orientation="h", y=-0.15), margin=dict(l=60, r=20, t=60, b=40))
    return fig
