"""Figure builders (plain functions returning plotly figures; no Dash callbacks here)."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pandas as pd

from dashboard.render.palette import LIMIT_COLOUR, LIMIT_DASHES, TREND_COLOUR
from dashboard.state.frames import text_values
from tracescreen import vocabulary

#: above this many points a series is drawn with WebGL (``Scattergl``)
WEBGL_THRESHOLD = 2000
_POINT_COLUMNS = ("result_text", "unit", "sample_id", "lab", "batch", "qualifier",
                  "limit_table", "limit_ug_L", "source")


def _wrap(text: str, width: int = 70) -> str:
    return "<br>".join(textwrap.wrap(text, width)) if text else ""


def is_site_sample(rows: pd.DataFrame) -> np.ndarray:
    """Mask of site-sample rows (QC rows left out), without materialising the text column."""
    if "sample_type" not in rows.columns:
        return np.ones(len(rows), dtype=bool)
    return text_values(rows["sample_type"]) == "sample"


def result_points(rows: pd.DataFrame) -> pd.DataFrame:
    """One point per site-sample result: its plotted value and its worst screening row.

    ``y`` is the detected value, or the detection limit for a non-detect [µg/L]. ``status`` is the
    worst status among the result's limits, and the limit columns come from that row.
    """
    status = text_values(rows["status"])
    rank = np.array([vocabulary.SEVERITY.get(x, -1) for x in status], dtype=np.int8) if len(rows) else np.zeros(0, np.int8)
    keep = np.flatnonzero(is_site_sample(rows))
    if not len(keep):
        return rows.iloc[0:0].assign(y=pd.Series(dtype=float))
    rid = rows["_rid"].to_numpy()[keep]
    order = np.lexsort((-rank[keep], rid))
    rid_sorted = rid[order]
    first = np.sort(keep[order[np.r_[True, rid_sorted[1:] != rid_sorted[:-1]]]])
    pts = rows.iloc[first].copy()
    detected = pts["detected"].to_numpy(dtype=bool)
    pts["y"] = np.where(detected, pts["value_ug_L"].to_numpy(float),
                        pts["detection_limit_ug_L"].to_numpy(float))
    pts["status"] = status[first]
    return pts


def limit_steps(rows: pd.DataFrame) -> list[dict]:
    """Each applicable limit of a series as a step line following the sampling dates.

    A fixed limit gives a flat line; a hardness-dependent one follows the hardness of each sample;
    an entry with effective dates is drawn only where it was in force.
    """
    limit = rows["limit_ug_L"].to_numpy(float)
    keep = np.flatnonzero(is_site_sample(rows) & np.isfinite(limit))
    if not len(keep):
        return []
    cols = [c for c in ("limit_table", "duration", "basis", "source", "use") if c in rows.columns]
    text = {c: text_values(rows[c].iloc[keep]) for c in cols}
    empty = np.full(len(keep), "", dtype=object)
    key = np.char.add(np.char.add(text.get("limit_table", empty).astype(str), "\x1f"),
                      np.char.add(text.get("duration", empty).astype(str), "\x1f" )) 
    key = np.char.add(key, text.get("basis", empty).astype(str))
    dates = rows["sampled_at"].to_numpy()[keep]
    values = limit[keep]
    out = []
    for k in np.unique(key):
        idx = np.flatnonzero(key == k)
        idx = idx[np.argsort(dates[idx], kind="stable")]
        x, first = np.unique(dates[idx], return_index=True)  # one step per sampling date
        y = values[idx][first]
        out.append({
            "table": str(text["limit_table"][idx[0]]) if "limit_table" in text else "",
            "duration": str(text["duration"][idx[0]]) if "duration" in text else "",
            "use": str(text["use"][idx[0]]) if "use" in text else "",
            "source": str(text["source"][idx[0]]) if "source" in text else "",
            "x": x, "y": y, "varies": bool(len(np.unique(y)) > 1),
        })
    return out


def _dates(values) -> np.ndarray:
    """Dates as ISO text for plotly (cheap to serialise, exact to the second)."""
    arr = np.asarray(values, dtype="datetime64[s]")
    return np.datetime_as_string(arr, unit="s")


def _layout(**extra) -> dict:
    """Plain white layout shared by the figures (a literal: no template object to copy)."""
    axis = {"gridcolor": "#e6e9ec", "zerolinecolor": "#c9ced4", "linecolor": "#8a939c", "ticks": "outside"}
    base = {"paper_bgcolor": "white", "plot_bgcolor": "white", "font": {"family": "system-ui, sans-serif"},
            "hoverlabel": {"align": "left"}, "xaxis": dict(axis), "yaxis": dict(axis),
            "legend": {"orientation": "h", "yanchor": "top", "y": -0.14, "x": 0}}
    for key, value in extra.items():
        base[key] = {**base[key], **value} if isinstance(value, dict) and isinstance(base.get(key), dict) else value
    return base


def trend_trace(trend: dict) -> dict:
    """The trend line as a plotly trace (``trend``: ``x``, ``y`` [µg/L], ``label``)."""
    return {"type": "scatter", "mode": "lines", "x": _dates(trend["x"]).tolist(), "y": list(trend["y"]),
            "name": f"Trend: {trend.get('label', '')}", "line": {"color": TREND_COLOUR, "width": 2},
            "hovertemplate": "Trend %{y:.4g} µg/L on %{x|%Y-%m-%d}<extra></extra>", "meta": {"role": "trend"}}


def site_metal_figure(rows: pd.DataFrame, title: str, trend: dict | None = None,
                      log_y: bool = False, points: pd.DataFrame | None = None) -> dict:
    """Results over time with limits, exceedances and (optionally) a trend line, as a plotly dict.

    Built as plain dicts (no figure-object validation), which keeps the chart callback fast.

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
    points : DataFrame, optional
        ``result_points(rows)`` when the caller has it already.
    """
    pts = result_points(rows) if points is None else points
    webgl = len(pts) > WEBGL_THRESHOLD
    data = []
    status_of = pts["status"].to_numpy() if len(pts) else np.array([], dtype=object)
    # text of the hover columns once for all points, then split by status
    blank = np.full(len(pts), "", dtype=object)
    texts = [text_values(pts[c]) if c in pts else blank for c in _POINT_COLUMNS[:-2]]
    limit_num = pts["limit_ug_L"].to_numpy(float) if len(pts) else np.zeros(0)
    limit_txt = np.char.mod("%.4g", limit_num).astype(object)
    limit_txt[~np.isfinite(limit_num)] = "–"
    sources = text_values(pts["source"]) if "source" in pts else blank
    wrapped = {u: _wrap(u) for u in set(sources)}
    custom_all = np.column_stack([*texts, limit_txt, [wrapped[u] for u in sources]]) if len(pts) else None
    x_all = _dates(pts["sampled_at"]) if len(pts) else None
    y_all = pts["y"].to_numpy(float) if len(pts) else None
    for status in (*vocabulary.RANKED, "qc_sample"):
        m = status_of == status
        n = int(m.sum())
        if not n:
            continue
        data.append({
            "type": "scattergl" if webgl else "scatter", "mode": "markers",
            "x": x_all[m], "y": y_all[m],
            "name": f"{vocabulary.LABEL[status]} ({n})",
            "marker": {"symbol": vocabulary.SYMBOL[status], "color": vocabulary.COLOUR[status], "size": 9,
                       "line": {"width": 1.5, "color": vocabulary.COLOUR[status]}},
            "customdata": custom_all[m].tolist(),
            "hovertemplate": (
                "%{x|%Y-%m-%d}<br>Result as reported: <b>%{customdata[0]} %{customdata[1]}</b>"
                " (plotted %{y:.4g} µg/L)<br>Sample %{customdata[2]} · lab %{customdata[3]}"
                " · batch %{customdata[4]} · qualifier %{customdata[5]}"
                "<br>Limit: %{customdata[6]} %{customdata[7]} µg/L<br>Source: %{customdata[8]}"
                f"<extra>{vocabulary.LABEL[status]}</extra>"
            ),
            "meta": {"role": "result", "status": status},
        })
    for i, lim in enumerate(limit_steps(rows)):
        label = f"Limit: {lim['table']}" + (f" ({lim['duration']})" if lim["duration"] else "")
        data.append({
            "type": "scatter", "mode": "lines", "x": _dates(lim["x"]), "y": lim["y"], "name": label,
            "line": {"shape": "hv", "color": LIMIT_COLOUR, "width": 2, "dash": LIMIT_DASHES[i % len(LIMIT_DASHES)]},
            "hovertemplate": (f"{label}<br>%{{y:.4g}} µg/L on %{{x|%Y-%m-%d}}"
                              + (" (hardness-dependent)" if lim["varies"] else "")
                              + f"<br>Use: {lim['use']}<br>Source: {_wrap(lim['source'])}<extra></extra>"),
            "meta": {"role": "limit", "table": lim["table"], "varies": lim["varies"]},
        })
    if trend:
        data.append(trend_trace(trend))
    layout = _layout(
        title={"text": title, "x": 0.01}, margin={"l": 60, "r": 20, "t": 60, "b": 40}, height=520,
        yaxis={"title": {"text": "Concentration [µg/L] (non-detects at their detection limit)"},
               "type": "log" if log_y else "linear", **({} if log_y else {"rangemode": "tozero"})},
        xaxis={"title": {"text": "Sampling date"}, "type": "date"},
        uirevision=title, meta={"webgl": webgl, "n_points": int(len(pts))},
    )
    if pts.empty:
        layout["annotations"] = [{"text": "No site-sample results for this selection", "showarrow": False,
                                  "xref": "paper", "yref": "paper", "x": 0.5, "y": 0.5}]
    return {"data": data, "layout": layout}


def map_figure(site_table: pd.DataFrame) -> dict:
    """Sites by longitude and latitude, marked by worst status, with no tile server needed.

    The axes are plain degrees with the east-west scale shrunk by cos(latitude), so distances
    look right at the catchment's latitude (an equirectangular view).
    """
    located = site_table.dropna(subset=[c for c in ("latitude", "longitude") if c in site_table])
    if "latitude" not in located or located.empty:
        return {"data": [], "layout": _layout(annotations=[{
            "text": "No site coordinates (give a sites file with latitude and longitude)",
            "showarrow": False, "xref": "paper", "yref": "paper", "x": 0.5, "y": 0.5}])}
    data = []
    for status in vocabulary.RANKED:
        sub = located[located["worst"] == status]
        if sub.empty:
            continue
        names = sub["name"].fillna("").astype(str) if "name" in sub else sub["site_id"]
        data.append({
            "type": "scatter", "mode": "markers+text", "x": sub["longitude"].to_numpy(float),
            "y": sub["latitude"].to_numpy(float), "text": sub["site_id"].astype(str).tolist(),
            "textposition": "top center", "name": f"{vocabulary.LABEL[status]} ({len(sub)})",
            "marker": {"symbol": vocabulary.SYMBOL[status], "color": vocabulary.COLOUR[status], "size": 16,
                       "line": {"width": 2, "color": vocabulary.COLOUR[status]}},
            "customdata": np.column_stack([sub["site_id"].astype(str), names, sub["n_results"],
                                           sub["n_exceeds"]]).tolist(),
            "hovertemplate": ("<b>%{customdata[1]}</b> (%{customdata[0]})<br>"
                              f"Worst: {vocabulary.LABEL[status]}<br>%{{customdata[2]}} results, "
                              "%{customdata[3]} above a limit<br>%{y:.4f}° N, %{x:.4f}° E<extra></extra>"),
            "meta": {"role": "sites", "status": status},
        })
    lat0 = float(located["latitude"].mean())
    layout = _layout(
        height=620, margin={"l": 60, "r": 20, "t": 30, "b": 40},
        xaxis={"title": {"text": "Longitude [°]"}, "scaleanchor": "y",
               "scaleratio": max(math.cos(math.radians(lat0)), 0.05), "constrain": "domain"},
        yaxis={"title": {"text": "Latitude [°]"}},
    )
    return {"data": data, "layout": layout}
