"""What the charts share: points of a series, limit steps, dates, the plain layout, the trend line
(the site chart: :mod:`dashboard.render.site_chart`; the map: :mod:`dashboard.render.map_figure`)."""

from __future__ import annotations

import textwrap

import numpy as np
import pandas as pd

from dashboard.render.palette import TREND_COLOUR
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
