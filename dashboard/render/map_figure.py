"""The map: sites at their coordinates, marked by worst status, over the user's own GeoJSON (no tiles).

The axes are plain degrees with the east-west scale shrunk by cos(latitude), so distances look
right at the sites' latitude (an equirectangular view); nothing is fetched from a tile server, so
the map works offline. Hovering a site gives its coordinates as 52.2861° N, 3.5712° W; clicking it
opens its chart (``pages/map.py``).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from dashboard.render.figures import _layout
from tracescreen import vocabulary

OVERLAY_COLOURS = ("#0072B2", "#009E73", "#6B6B6B", "#A8527F")


def degrees(values, positive: str, negative: str) -> list[str]:
    """Signed decimal degrees as ``3.5712° W`` (hemisphere letter instead of a sign)."""
    out = []
    for v in np.asarray(values, dtype=float):
        out.append("" if not np.isfinite(v) else f"{abs(v):.4f}° {positive if v >= 0 else negative}")
    return out


def overlay_traces(overlays) -> list[dict]:
    """Each GeoJSON overlay as outlines, lines and labelled points under the sites."""
    data = []
    for i, ov in enumerate(overlays or []):
        colour = OVERLAY_COLOURS[i % len(OVERLAY_COLOURS)]
        common = {"legendgroup": f"overlay-{i}", "hoverinfo": "skip", "meta": {"role": "overlay", "name": ov.name}}
        if ov.polygon_x:
            data.append({"type": "scatter", "mode": "lines", "x": ov.polygon_x, "y": ov.polygon_y, "name": ov.name,
                         "fill": "toself", "fillcolor": "rgba(0,114,178,0.06)", "line": {"color": colour, "width": 1.5},
                         **common})
        if ov.line_x:
            data.append({"type": "scatter", "mode": "lines", "x": ov.line_x, "y": ov.line_y,
                         "name": ov.name + (" (lines)" if ov.polygon_x else ""), "line": {"color": colour, "width": 2},
                         **common})
        if ov.point_x:
            data.append({"type": "scatter", "mode": "markers+text", "x": ov.point_x, "y": ov.point_y,
                         "text": ov.point_names, "textposition": "bottom center", "name": ov.name + " (points)",
                         "marker": {"symbol": "cross-thin-open", "color": colour, "size": 9}, **common})
    return data


def map_figure(site_table: pd.DataFrame, overlays=(), any_results: bool = True) -> dict:
    """Sites by longitude and latitude, marked by worst status, over the overlays.

    ``any_results`` false: the filters leave no result, which the empty map says (rather than that
    coordinates are missing).
    """
    has_coords = {"latitude", "longitude"} <= set(site_table.columns)
    located = site_table.dropna(subset=["latitude", "longitude"]) if has_coords else site_table.iloc[0:0]
    data = overlay_traces(overlays)
    if located.empty:
        text = ("No results match these filters" if not any_results else
                "No site coordinates (give a sites file with latitude and longitude)")
        return {"data": data, "layout": _layout(height=620, annotations=[{
            "text": text, "showarrow": False, "xref": "paper", "yref": "paper", "x": 0.5, "y": 0.5}])}
    for status in vocabulary.RANKED:
        sub = located[located["worst"] == status]
        if sub.empty:
            continue
        names = sub["name"].fillna("").astype(str) if "name" in sub else sub["site_id"].astype(str)
        lat, lon = sub["latitude"].to_numpy(float), sub["longitude"].to_numpy(float)
        data.append({
            "type": "scatter", "mode": "markers+text", "x": lon, "y": lat, "text": sub["site_id"].astype(str).tolist(),
            "textposition": "top center", "name": f"{vocabulary.LABEL[status]} ({len(sub)})",
            "marker": {"symbol": vocabulary.SYMBOL[status], "color": vocabulary.COLOUR[status], "size": 16,
                       "line": {"width": 2, "color": vocabulary.COLOUR[status]}},
            "customdata": np.column_stack([sub["site_id"].astype(str), names, sub["n_results"], sub["n_exceeds"],
                                           degrees(lat, "N", "S"), degrees(lon, "E", "W")]).tolist(),
            "hovertemplate": ("<b>%{customdata[1]}</b> (%{customdata[0]})<br>"
                              f"Worst: {vocabulary.LABEL[status]}<br>%{{customdata[2]}} results, "
                              "%{customdata[3]} above a limit<br>%{customdata[4]}, %{customdata[5]}"
                              "<br>Click to open its chart<extra></extra>"),
            "meta": {"role": "sites", "status": status},
        })
    lat0 = float(located["latitude"].mean())
    layout = _layout(
        height=620, margin={"l": 60, "r": 20, "t": 30, "b": 40}, clickmode="event",
        xaxis={"title": {"text": "Longitude [°] (negative: west)"}, "scaleanchor": "y",
               "scaleratio": max(math.cos(math.radians(lat0)), 0.05), "constrain": "domain"},
        yaxis={"title": {"text": "Latitude [°] (negative: south)"}},
    )
    return {"data": data, "layout": layout}


def map_rows(located: pd.DataFrame) -> list[dict]:
    """The sites on the map as table rows (the "data as a table" view)."""
    rows = []
    for r in located.itertuples(index=False):
        lat, lon = getattr(r, "latitude", np.nan), getattr(r, "longitude", np.nan)
        rows.append({"site_id": r.site_id, "name": getattr(r, "name", r.site_id), "worst": vocabulary.LABEL[r.worst],
                     "worst_code": r.worst, "n_results": int(r.n_results), "n_exceeds": int(r.n_exceeds),
                     "latitude": degrees([lat], "N", "S")[0], "longitude": degrees([lon], "E", "W")[0]})
    return rows
