"""The report's charts: small multiples per metal, one panel per site.

Each result is a marker shaped and coloured by its worst status over its limits, as on the dashboard
(:data:`tracescreen.vocabulary.SYMBOL`, :data:`~tracescreen.vocabulary.COLOUR`): exceedances are
filled up-triangles; non-detects are open markers drawn at their detection limit. Each limit is a
line labelled with its value and the reference [k] of its table (equal values share one label);
a limit that depends on the sample (hardness) is a step line; a period limit (running annual mean,
percentile) is drawn with its period values as a dotted line. A log axis is labelled "log scale" and
its ticks are written out in full (0.1, 0.2, 0.5, 1, 2, 5 ...), never as bare mantissas.

By default only series with findings are drawn (an exceedance, or a rising trend projected to reach
a limit): a data set of hundreds of sites stays readable; ``which="all"`` draws every series.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen import vocabulary
from tracescreen._internal.text import format_significant
from tracescreen.report.findings import RESULT_KEY, limit_label, limit_precision
from tracescreen.statistics.series import site_samples

#: The plotly configuration of every interactive chart of tracescreen (the dashboard uses it too):
#: no logo, no cloud or editing links, image export named for the chart.
PLOTLY_CONFIG = {"displaylogo": False, "showSendToCloud": False, "showEditInChartStudio": False, "showLink": False,
                 "modeBarButtonsToRemove": ["sendDataToCloud", "editInChartStudio", "lasso2d", "select2d"],
                 "toImageButtonOptions": {"format": "svg", "filename": "tracescreen-chart"}}

#: Panels per figure (two columns by three rows fit an A4 page with the caption).
PANELS_PER_FIGURE = 6
COLUMNS = 2
WIDTH, PANEL_HEIGHT = 720, 250
SERIES = ["site_id", "analyte", "fraction"]
WHICH = ("findings", "all", "none")


def chart_series(screening: pd.DataFrame, trends: pd.DataFrame | None = None, which: str = "findings") -> pd.DataFrame:
    """The series (site, analyte, fraction) to draw: those with findings, or all.

    A finding is a result above a limit, or a rising trend whose line reaches a limit
    (``trends.crosses_limit_on``).
    """
    site = site_samples(screening)
    if which == "none" or site.empty:
        return pd.DataFrame(columns=SERIES)
    if which == "all":
        return site[SERIES].astype(str).drop_duplicates().sort_values(SERIES).reset_index(drop=True)
    exc = site.loc[site["status"].eq("exceeds"), SERIES].astype(str)
    parts = [exc]
    if trends is not None and len(trends) and "crosses_limit_on" in trends.columns:
        up = trends[trends["direction"].astype(str).eq("increasing") & trends["crosses_limit_on"].notna()]
        parts.append(up[SERIES].astype(str))
    return pd.concat(parts).drop_duplicates().sort_values(SERIES).reset_index(drop=True)


def result_points(rows: pd.DataFrame) -> pd.DataFrame:
    """One point per result: its series, date (ISO text), the value (a non-detect at its detection
    limit) and its worst status over its limits."""
    code = rows["status"].astype(str).map(vocabulary.STATUS_CODE).to_numpy()
    key = [c for c in RESULT_KEY if c in rows.columns]
    pts = rows.assign(_c=code).sort_values("_c", kind="stable").drop_duplicates(key)
    y = pts["value_ug_L"].where(pts["detected"].astype(bool), pts["detection_limit_ug_L"])
    pts = pd.DataFrame({**{c: pts[c].astype(str) for c in SERIES}, "date": pts["sampled_at"].dt.strftime("%Y-%m-%d"),
                        "t": pts["sampled_at"], "y": y.astype(float),
                        "status": np.asarray(vocabulary.STATUSES, dtype=object)[pts["_c"].to_numpy()]})
    return pts.sort_values(SERIES + ["t"], kind="stable").reset_index(drop=True)


def nice_ticks(lo: float, hi: float) -> list[float]:
    """1-2-5 ticks of a log axis from ``lo`` to ``hi`` (thinned to decades over a wide range).

    >>> nice_ticks(0.3, 40)
    [0.5, 1.0, 2.0, 5.0, 10.0, 20.0]
    """
    k0, k1 = int(np.floor(np.log10(lo))), int(np.ceil(np.log10(hi)))
    steps = (1.0,) if k1 - k0 > 4 else (1.0, 2.0, 5.0)
    ticks = [m * 10.0 ** k for k in range(k0, k1 + 1) for m in steps]
    return [float(f"{t:.6g}") for t in ticks if lo <= t <= hi]


def _varying_label(label: str, dates: np.ndarray, text: np.ndarray, hardness: bool, since: str = "") -> str:
    """A varying limit's label: its range (hardness), or its latest value with the day it took effect."""
    if hardness:
        return f"{label} {min(text, key=float)}–{max(text, key=float)} µg/L (hardness)"
    change = np.flatnonzero(text[1:] != text[:-1])
    since = since or (dates[change[-1] + 1] if change.size else dates[0])
    return f"{label} {text[-1]} µg/L from {since} ({text[change[-1]] if change.size else text[0]} before)"


def limit_lines(site: pd.DataFrame, entries: pd.DataFrame, refs: pd.DataFrame) -> dict:
    """The limit lines of every series, computed once for all panels.

    Returns
    -------
    dict
        (site_id, analyte, fraction) -> list of lines: ``{"kind": "constant", "y", "label"}`` (equal
        values of several tables share one label), ``{"kind": "step", "x", "y", "label"}`` for a limit
        that varies with the sample (hardness) or changes on a date, ``{"kind": "period", "x", "y",
        "label"}`` for the period values of a period limit.
    """
    from tracescreen.report.findings import _depends_on_hardness

    lim = site[site["limit_ug_L"].notna()]
    if lim.empty:
        return {}
    lim = lim.sort_values("sampled_at", kind="stable")
    label = limit_label(lim, refs).to_numpy()
    text = format_significant(lim["limit_ug_L"], limit_precision(lim, entries)).to_numpy()
    value = lim["limit_ug_L"].to_numpy(float)
    dates = lim["sampled_at"].dt.strftime("%Y-%m-%d").to_numpy()
    hard = _depends_on_hardness(lim, entries)
    start = np.full(len(lim), "", dtype=object)
    if "effective_from" in entries.columns and "entry_id" in lim.columns:
        starts = pd.to_datetime(entries.set_index("entry_id")["effective_from"], errors="coerce")
        start = lim["entry_id"].astype(object).map(starts.dt.strftime("%Y-%m-%d")).fillna("").to_numpy(dtype=object)
    period = lim["period_value_ug_L"].to_numpy(float) if "period_value_ug_L" in lim else np.full(len(lim), np.nan)
    groups = pd.DataFrame({c: lim[c].astype(str).to_numpy() for c in SERIES}).assign(label=label)
    out: dict = {}
    constant: dict = {}
    for (sid, analyte, fraction, lab), idx in groups.groupby(SERIES + ["label"], sort=True).indices.items():
        key = (sid, analyte, fraction)
        lines = out.setdefault(key, [])
        _, first = np.unique(dates[idx], return_index=True)
        idx = idx[np.sort(first)]  # one point per date
        if (text[idx] == text[idx[0]]).all():
            constant.setdefault(key, {}).setdefault(text[idx[0]], [value[idx[0]], []])[1].append(lab)
        else:
            lines.append({"kind": "hardness" if hard[idx].any() else "step", "x": dates[idx].tolist(), "y": value[idx].tolist(),
                          "label": _varying_label(lab, dates[idx], text[idx], bool(hard[idx].any()), start[idx[-1]])})
        p = idx[np.isfinite(period[idx])]
        if p.size:
            lines.append({"kind": "period", "x": dates[p].tolist(), "y": period[p].tolist(),
                          "label": f"{lab}: period values"})
    for key, values in constant.items():
        out[key] += [{"kind": "constant", "y": v, "label": f"{t} µg/L " + ", ".join(labs)} for t, (v, labs) in values.items()]
    return out


def _y_axis(values: np.ndarray) -> dict:
    v = values[np.isfinite(values) & (values > 0)]
    if v.size == 0:
        return {"type": "linear", "title": "µg/L"}
    lo, hi = v.min(), v.max()
    if hi / lo <= 20:
        return {"type": "linear", "title": "µg/L", "range": [0, hi * 1.15]}
    ticks = nice_ticks(lo / 1.5, hi * 1.5)
    return {"type": "log", "title": "µg/L (log scale)", "range": [np.log10(lo / 1.5), np.log10(hi * 1.5)],
            "tickvals": ticks, "ticktext": [f"{t:g}" for t in ticks]}


def plain(text) -> str:
    """User text shown as text in a plotly label (plotly reads ``<b>``, ``<a href>`` and ``<br>`` in labels)."""
    return str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def _axis_names(i: int) -> tuple[str, str]:
    n = "" if i == 0 else str(i + 1)
    return "x" + n, "y" + n


def _panel(traces: list, i: int, points: pd.DataFrame, lines: list[dict], x_range: list[str], shown: set) -> None:
    """The traces of panel ``i`` (plain plotly dicts: building validated objects is slow)."""
    xa, ya = _axis_names(i)
    status = points["status"].to_numpy()
    for st in vocabulary.STATUSES:
        m = status == st
        if not m.any():
            continue
        colour = vocabulary.COLOUR[st]
        traces.append({"type": "scatter", "x": points["date"].to_numpy()[m].tolist(), "y": points["y"].to_numpy()[m].tolist(),
                       "mode": "markers", "name": vocabulary.LABEL[st], "legendgroup": st, "showlegend": st not in shown,
                       "xaxis": xa, "yaxis": ya,
                       "marker": {"symbol": vocabulary.SYMBOL[st], "color": colour, "size": 9 if st == "exceeds" else 6,
                                  "line": {"width": 1.5, "color": colour}}})
        shown.add(st)
    n_hardness = 0
    for line in lines:
        kind = line["kind"]
        style = LINE_STYLES[kind]
        trace = {"type": "scatter", "x": x_range if kind == "constant" else line["x"],
                 "y": [line["y"]] * 2 if kind == "constant" else line["y"], "name": style["name"],
                 "legendgroup": kind, "showlegend": kind not in shown, "xaxis": xa, "yaxis": ya}
        if kind == "hardness":  # a limit of its own for each sample: a mark at each sample's date
            symbol, colour = HARDNESS_MARKS[n_hardness % len(HARDNESS_MARKS)]
            n_hardness += 1
            kind = line["label"].split(" ", 2)[1] if line["label"].count(" ") > 1 else line["label"]
            trace.update(mode="markers", name=plain(line["label"].split(" µg/L")[0].rsplit(" ", 1)[0])
                         + ": limit of each sample (hardness)", legendgroup=kind, showlegend=kind not in shown,
                         marker={"symbol": symbol, "size": 10, "color": colour, "line": {"width": 2, "color": colour}})
        else:
            trace.update(mode="lines", line={"dash": style["dash"], "width": 1.3, "color": "#3b3b3b", "shape": "hv"})
        traces.append(trace)
        shown.add(kind)


#: Marks of limits computed for each sample (hardness), one per limit of a panel: symbol, colour.
HARDNESS_MARKS = (("line-ew", "#3b3b3b"), ("x-thin-open", "#6b6b6b"), ("line-ns", "#3b3b3b"))

#: How each kind of limit line is drawn and named in the legend.
LINE_STYLES = {
    "constant": {"dash": "dash", "name": "Limit (value and table [k])"},
    "step": {"dash": "dashdot", "name": "Limit changed on a date"},
    "hardness": {"dash": None, "name": "Limit of each sample (from its hardness)"},
    "period": {"dash": "dot", "name": "Period values (annual mean, percentile)"},
}


def _annotate(annotations: list, i: int, lines: list[dict], y_axis: dict) -> None:
    """Each line's label at the panel's right edge, moved apart where labels would overlap."""
    log = y_axis["type"] == "log"
    pos = []
    for line in lines:
        y = float(line["y"] if line["kind"] == "constant" else np.max(line["y"]) if line["kind"] == "hardness"
                  else line["y"][-1])
        if log and y <= 0:
            continue
        pos.append((np.log10(y) if log else y, line["label"]))
    if not pos:
        return
    lo, hi = y_axis.get("range") or (min(p for p, _ in pos), max(p for p, _ in pos) + 1)
    gap = (hi - lo) * 0.09
    placed: list[float] = []
    xa, ya = _axis_names(i)
    for p, label in sorted(pos):
        p = max(p, placed[-1] + gap) if placed else p
        placed.append(p)
        annotations.append({"xref": f"{xa} domain", "yref": ya, "x": 1.0, "y": p, "text": plain(label), "showarrow": False,
                            "xanchor": "right", "yanchor": "bottom", "font": {"size": 9, "color": "#222"},
                            "bgcolor": "rgba(255,255,255,0.5)"})


def _grid_axes(n: int, y_axis: dict, x_range: list[str]) -> tuple[dict, list]:
    """Axes of an n-panel grid (:data:`COLUMNS` wide) and the panels' title annotations' positions."""
    rows = max(int(np.ceil(n / COLUMNS)), 1)
    gap_x, gap_y = 0.09, 0.26 / rows
    w = (1 - gap_x * (COLUMNS - 1)) / COLUMNS
    h = (1 - gap_y * (rows - 1)) / rows
    layout, titles = {}, []
    start, end = x_range
    for i in range(n):
        r, c = divmod(i, COLUMNS)
        x0, y1 = c * (w + gap_x), 1 - r * (h + gap_y)
        xa, ya = _axis_names(i)
        layout["xaxis" + xa[1:]] = {"domain": [x0, x0 + w], "anchor": ya, "range": [start, end], "type": "date",
                                    "gridcolor": "#e5e7eb", "tickfont": {"size": 9}, "matches": None if i == 0 else "x"}
        layout["yaxis" + ya[1:]] = {"domain": [y1 - h, y1], "anchor": xa, "type": y_axis["type"],
                                    "title": {"text": y_axis["title"], "font": {"size": 10}},
                                    "range": y_axis.get("range"), "tickvals": y_axis.get("tickvals"),
                                    "ticktext": y_axis.get("ticktext"), "gridcolor": "#e5e7eb",
                                    "tickfont": {"size": 9}, "zeroline": False}
        titles.append((x0, y1))
    return layout, titles


def metal_figure(points: dict, lines: dict, series: list[tuple], names: dict, title: str) -> dict:
    """One figure (a plotly figure dict) of up to :data:`PANELS_PER_FIGURE` series of one metal, one
    site per panel, on shared axes."""
    every = np.concatenate([points[k]["y"].to_numpy(float) for k in series] + [
        np.atleast_1d(np.asarray(ln["y"], float)) for k in series for ln in lines.get(k, [])])
    y_axis = _y_axis(every)
    t = pd.concat([points[k]["t"] for k in series])
    pad = pd.Timedelta(days=30)
    x_range = [(t.min() - pad).strftime("%Y-%m-%d"), (t.max() + pad).strftime("%Y-%m-%d")]
    traces, annotations, shown = [], [], set()
    axes, titles = _grid_axes(len(series), y_axis, x_range)
    for i, k in enumerate(series):
        _panel(traces, i, points[k], lines.get(k, []), x_range, shown)
        _annotate(annotations, i, lines.get(k, []), y_axis)
        x, y = titles[i]
        name = f"{k[0]} {names.get(k[0], '')}".strip()
        annotations.append({"xref": "paper", "yref": "paper", "x": x, "y": y, "xanchor": "left", "yanchor": "bottom",
                            "showarrow": False, "text": plain(name if len(name) <= 44 else name[:43] + "…"),
                            "font": {"size": 11}})
    n_rows = max(int(np.ceil(len(series) / COLUMNS)), 1)
    height = 110 + PANEL_HEIGHT * n_rows
    layout = {"width": WIDTH, "height": height, "showlegend": True, "paper_bgcolor": "white", "plot_bgcolor": "white",
              "font": {"family": "DejaVu Sans, Arial, sans-serif"}, "margin": {"l": 60, "r": 15, "t": 95, "b": 30},
              "annotations": annotations, "title": {"text": plain(title), "x": 0.01, "y": 1 - 8 / height, "yanchor": "top",
                                                    "font": {"size": 14}},
              "legend": {"orientation": "h", "x": 0, "y": 1 + 40 / (height - 125), "yanchor": "bottom",
                         "font": {"size": 9}}, **axes}
    return {"data": traces, "layout": layout}


def metal_figures(screening: pd.DataFrame, series: pd.DataFrame, entries: pd.DataFrame, refs: pd.DataFrame,
                  sites: pd.DataFrame | None = None) -> list:
    """The chart figures of the chosen series: per metal (analyte, fraction), sites in panels of
    :data:`PANELS_PER_FIGURE`.

    Returns
    -------
    list of :class:`tracescreen.report.document.Figure`
    """
    from tracescreen.report.document import Figure

    if series.empty:
        return []
    site = site_samples(screening)
    site = site.merge(series, on=SERIES) if len(site) else site
    names = dict(zip(sites["site_id"].astype(str), sites["name"].fillna("").astype(str))) if sites is not None else {}
    pts = result_points(site)
    points = {k: pts.iloc[idx] for k, idx in pts.groupby(SERIES, sort=True).indices.items()}
    lines = limit_lines(site, entries, refs)
    by_metal: dict = {}
    for k in points:
        by_metal.setdefault(k[1:], []).append(k)
    out = []
    for (analyte, fraction), keys in sorted(by_metal.items()):
        parts = [keys[i:i + PANELS_PER_FIGURE] for i in range(0, len(keys), PANELS_PER_FIGURE)]
        for n, part in enumerate(parts):
            title = f"{analyte} ({fraction})" + (f", part {n + 1} of {len(parts)}" if len(parts) > 1 else "")
            fig = metal_figure(points, lines, part, names, title)
            fid = "chart-" + "".join(ch if ch.isalnum() else "-" for ch in f"{analyte}-{fraction}-{n + 1}")
            out.append(Figure(fig, fid, caption=title, width=WIDTH, height=int(fig["layout"]["height"]),
                              points=sum(len(points[k]) for k in part)))
    return out
