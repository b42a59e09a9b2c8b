"""Figure builders (plain functions returning plotly figures; no Dash callbacks here)."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from dashboard.palette import (
    LIMIT_COLOUR,
    LIMIT_DASHES,
    STATUS_COLOUR,
    STATUS_LABEL,
    STATUS_ORDER,
    STATUS_RANK,
    STATUS_SYMBOL,
    TREND_COLOUR,
)

#: above this many points a series is drawn with WebGL (``Scattergl``)
WEBGL_THRESHOLD = 2000
_POINT_COLUMNS = ("result_text", "unit", "sample_id", "lab", "batch", "qualifier",
                  "limit_table", "limit_ug_L", "source")


def _text(series: pd.Series) -> np.ndarray:
    """A column as display strings ("" for missing), cheap for categoricals."""
    if isinstance(series.dtype, pd.CategoricalDtype):
        cats = np.asarray([str(c) for c in series.cat.categories] + [""], dtype=object)
        return cats[series.cat.codes.to_numpy()]
    return series.astype(object).where(series.notna(), "").astype(str).to_numpy(dtype=object)


def _wrap(text: str, width: int = 70) -> str:
    return "<br>".join(textwrap.wrap(text, width)) if text else ""


def result_points(rows: pd.DataFrame) -> pd.DataFrame:
    """One point per site-sample result: its plotted value and its worst screening row.

    ``y`` is the detected value, or the detection limit for a non-detect [µg/L]. ``status`` is the
    worst status among the result's limits, and the limit columns come from that row.
    """
    if "sample_type" in rows.columns:
        rows = rows[(rows["sample_type"].astype(str) == "sample").to_numpy()]
    if rows.empty:
        return rows.assign(y=pd.Series(dtype=float))
    rank = rows["status"].astype(str).map(STATUS_RANK).fillna(-1).to_numpy()
    rid = rows["_rid"].to_numpy()
    order = np.lexsort((-rank, rid))
    rid_sorted = rid[order]
    first = order[np.r_[True, rid_sorted[1:] != rid_sorted[:-1]]]
    pts = rows.iloc[np.sort(first)].copy()
    detected = pts["detected"].to_numpy(dtype=bool)
    pts["y"] = np.where(detected, pts["value_ug_L"].to_numpy(float),
                        pts["detection_limit_ug_L"].to_numpy(float))
    pts["status"] = pts["status"].astype(str)
    return pts


def limit_steps(rows: pd.DataFrame) -> list[dict]:
    """Each applicable limit of a series as a step line following the sampling dates.

    A fixed limit gives a flat line; a hardness-dependent one follows the hardness of each sample;
    an entry with effective dates is drawn only where it was in force.
    """
    if "sample_type" in rows.columns:
        rows = rows[(rows["sample_type"].astype(str) == "sample").to_numpy()]
    rows = rows[rows["limit_ug_L"].notna().to_numpy()]
    out = []
    keys = [c for c in ("limit_table", "duration", "basis") if c in rows.columns]
    if rows.empty:
        return out
    for key, grp in rows.groupby(keys, observed=True, sort=True, dropna=False):
        key = key if isinstance(key, tuple) else (key,)
        grp = grp.sort_values("sampled_at", kind="stable").drop_duplicates("sampled_at")
        table = str(key[0])
        duration = str(key[1]) if len(key) > 1 and isinstance(key[1], str) and key[1] else ""
        source = str(grp["source"].iloc[0]) if "source" in grp else ""
        use = str(grp["use"].iloc[0]) if "use" in grp else ""
        out.append({
            "table": table, "duration": duration, "use": use, "source": source,
            "x": grp["sampled_at"].to_numpy(), "y": grp["limit_ug_L"].to_numpy(float),
            "varies": bool(grp["limit_ug_L"].nunique() > 1),
        })
    return out


def site_metal_figure(rows: pd.DataFrame, title: str, trend: dict | None = None,
                      log_y: bool = False) -> go.Figure:
    """Results over time with limits, exceedances and (optionally) a trend line.

    Parameters
    ----------
    rows : DataFrame
        Screened rows of one site, analyte and fraction (``SessionData.series``).
    title : str
        Figure title.
    trend : dict, optional
        ``{"x": [t0, t1], "y": [c0, c1], "label": str}``: a trend line [µg/L] and its test result.
    log_y : bool
        Logarithmic concentration axis.
    """
    pts = result_points(rows)
    webgl = len(pts) > WEBGL_THRESHOLD
    scatter = go.Scattergl if webgl else go.Scatter
    fig = go.Figure()
    for status in (*STATUS_ORDER, "qc_sample"):
        sub = pts[(pts["status"] == status).to_numpy()] if len(pts) else pts
        if sub.empty:
            continue
        custom = np.column_stack([_text(sub[c]) if c in sub else np.full(len(sub), "", object)
                                  for c in _POINT_COLUMNS])
        custom[:, 8] = [_wrap(s) for s in custom[:, 8]]
        fig.add_trace(scatter(
            x=sub["sampled_at"], y=sub["y"], mode="markers",
            name=f"{STATUS_LABEL[status]} ({len(sub)})",
            marker=dict(symbol=STATUS_SYMBOL[status], color=STATUS_COLOUR[status], size=9,
                        line=dict(width=1.5, color=STATUS_COLOUR[status])),
            customdata=custom,
            hovertemplate=(
                "%{x|%Y-%m-%d}<br>Result as reported: <b>%{customdata[0]} %{customdata[1]}</b>"
                " (plotted %{y:.4g} µg/L)<br>Sample %{customdata[2]} · lab %{customdata[3]}"
                " · batch %{customdata[4]} · qualifier %{customdata[5]}"
                "<br>Limit: %{customdata[6]} %{customdata[7]} µg/L<br>Source: %{customdata[8]}"
                f"<extra>{STATUS_LABEL[status]}</extra>"
            ),
            meta={"role": "result", "status": status},
        ))
    for i, lim in enumerate(limit_steps(rows)):
        label = f"Limit: {lim['table']}" + (f" ({lim['duration']})" if lim["duration"] else "")
        fig.add_trace(go.Scatter(
            x=lim["x"], y=lim["y"], mode="lines", line_shape="hv", name=label,
            line=dict(color=LIMIT_COLOUR, dash=LIMIT_DASHES[i % len(LIMIT_DASHES)], width=2),
            hovertemplate=(f"{label}<br>%{{y:.4g}} µg/L on %{{x|%Y-%m-%d}}"
                           + (" (hardness-dependent)" if lim["varies"] else "")
                           + f"<br>Use: {lim['use']}<br>Source: {_wrap(lim['source'])}<extra></extra>"),
            meta={"role": "limit", "table": lim["table"], "varies": lim["varies"]},
        ))
    if trend:
        fig.add_trace(go.Scatter(
            x=trend["x"], y=trend["y"], mode="lines", name=f"Trend: {trend.get('label', '')}",
            line=dict(color=TREND_COLOUR, width=2, dash="solid"),
            hovertemplate="Trend %{y:.4g} µg/L on %{x|%Y-%m-%d}<extra></extra>",
            meta={"role": "trend"},
        ))
    fig.update_layout(
        title=dict(text=title, x=0.01),
        template="plotly_white",
        margin=dict(l=60, r=20, t=60, b=40),
        height=520,
        legend=dict(orientation="h", yanchor="top", y=-0.12, x=0),
        yaxis=dict(title="Concentration [µg/L] (non-detects at their detection limit)",
                   type="log" if log_y else "linear", rangemode="tozero" if not log_y else None),
        xaxis=dict(title="Sampling date"),
        uirevision=title,
        meta={"webgl": webgl, "n_points": int(len(pts))},
    )
    if pts.empty:
        fig.add_annotation(text="No site-sample results for this selection", showarrow=False,
                           xref="paper", yref="paper", x=0.5, y=0.5)
    return fig


def map_figure(site_table: pd.DataFrame) -> go.Figure:
    """Sites by longitude and latitude, marked by worst status, with no tile server needed.

    The axes are plain degrees with the east-west scale shrunk by cos(latitude), so distances
    look right at the catchment's latitude (an equirectangular view).
    """
    fig = go.Figure()
    located = site_table.dropna(subset=[c for c in ("latitude", "longitude") if c in site_table])
    if "latitude" not in located or located.empty:
        fig.add_annotation(text="No site coordinates (give a sites file with latitude and longitude)",
                           showarrow=False, xref="paper", yref="paper", x=0.5, y=0.5)
        return fig
    for status in STATUS_ORDER:
        sub = located[located["worst"] == status]
        if sub.empty:
            continue
        fig.add_trace(go.Scatter(
            x=sub["longitude"], y=sub["latitude"], mode="markers+text",
            text=sub["site_id"], textposition="top center",
            name=f"{STATUS_LABEL[status]} ({len(sub)})",
            marker=dict(symbol=STATUS_SYMBOL[status], color=STATUS_COLOUR[status], size=16,
                        line=dict(width=2, color=STATUS_COLOUR[status])),
            customdata=np.column_stack([sub["site_id"], sub.get("name", sub["site_id"]).fillna(""),
                                        sub["n_results"], sub["n_exceeds"]]),
            hovertemplate=("<b>%{customdata[1]}</b> (%{customdata[0]})<br>"
                           f"Worst: {STATUS_LABEL[status]}<br>%{{customdata[2]}} results, "
                           "%{customdata[3]} above a limit<br>%{y:.4f}° N, %{x:.4f}° E<extra></extra>"),
            meta={"role": "sites", "status": status},
        ))
    lat0 = float(located["latitude"].mean())
    fig.update_layout(
        template="plotly_white", height=620, margin=dict(l=60, r=20, t=30, b=40),
        xaxis=dict(title="Longitude [°]", scaleanchor="y",
                   scaleratio=max(math.cos(math.radians(lat0)), 0.05), constrain="domain"),
        yaxis=dict(title="Latitude [°]"),
        legend=dict(orientation="h", yanchor="top", y=-0.12, x=0),
    )
    return fig
