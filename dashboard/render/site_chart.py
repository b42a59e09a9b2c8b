"""The site-and-metal chart: every result over time with the limits it is compared with.

* Each result is one point at its value, a non-detect open at its detection limit; its shape and
  colour are its worst status against the *single-sample* limits (the vocabulary's words in the
  legend and hover). The hover says "not detected, DL 1 µg/L" for a non-detect and, for a result
  above a limit, which limits (value, table, duration).
* Single-sample limits are step lines labelled with their value and table; lines that coincide
  (the same value on the same dates) are drawn once with every table named.
* Period-basis limits (running annual means, percentiles over a period) are drawn with the period
  values they are compared with, coloured by the period's status, never as if one sample were
  compared with them.
* A logarithmic axis is labelled at whole decades only (0.1, 1, 10, 100), never "2" for 20.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from dashboard.render.figures import WEBGL_THRESHOLD, _dates, _layout, _wrap, is_site_sample, result_points
from dashboard.render.palette import LIMIT_COLOUR, LIMIT_DASHES, PERIOD_COLOUR
from dashboard.state.frames import text_values
from tracescreen import vocabulary

SINGLE = ("single_sample", "")
BASIS_WORDS = {"running_annual_mean": "Running annual mean", "percentile": "Percentile over the period"}


def _texts(frame: pd.DataFrame, col: str) -> np.ndarray:
    """A text column's values ("" where the column is missing)."""
    return text_values(frame[col]) if col in frame.columns else np.full(len(frame), "", dtype=object)


def _num(v: float) -> str:
    return f"{v:.4g}" if np.isfinite(v) else "–"


def single_rows(rows: pd.DataFrame) -> pd.DataFrame:
    """Site-sample rows compared result by result (single-sample basis)."""
    basis = text_values(rows["basis"]) if "basis" in rows.columns else np.full(len(rows), "", dtype=object)
    return rows.iloc[np.flatnonzero(np.isin(basis, SINGLE) & is_site_sample(rows))]


def chart_points(rows: pd.DataFrame) -> pd.DataFrame:
    """One point per site-sample result, its status against the single-sample limits only; a result
    compared only on a period basis is a point without a limit of its own (its period is drawn apart)."""
    site = rows.iloc[np.flatnonzero(is_site_sample(rows))]
    single = single_rows(site)
    pts = result_points(single)
    missing = ~np.isin(site["_rid"].to_numpy(), pts["_rid"].to_numpy() if len(pts) else [])
    if missing.any():
        rest = site.iloc[np.flatnonzero(missing)].drop_duplicates("_rid").copy()
        detected = rest["detected"].to_numpy(dtype=bool)
        rest["y"] = np.where(detected, rest["value_ug_L"].to_numpy(float), rest["detection_limit_ug_L"].to_numpy(float))
        rest["status"] = "no_limit"
        rest["limit_ug_L"] = np.nan
        pts = pd.concat([pts.assign(status=pts["status"].astype(object)), rest.assign(status="no_limit")],
                        ignore_index=True) if len(pts) else rest
        pts = pts.sort_values(["sampled_at", "_rid"], kind="stable").reset_index(drop=True)
    if len(pts):
        pts["exceeded"] = _exceeded_text(single, pts["_rid"].to_numpy())
    return pts


def _exceeded_text(single: pd.DataFrame, rids: np.ndarray) -> np.ndarray:
    """For each result, the limits it is above: "10 µg/L who_gdwq_2022 (acute)", joined."""
    out = np.full(len(rids), "", dtype=object)
    if not len(single):
        return out
    above = single.iloc[np.flatnonzero(text_values(single["status"]) == "exceeds")]
    if not len(above):
        return out
    text = pd.Series([f"{_num(v)} µg/L {t}" + (f" ({d})" if d else "") for v, t, d in zip(
        above["limit_ug_L"].to_numpy(float), _texts(above, "limit_table"), _texts(above, "duration"))])
    joined = text.groupby(above["_rid"].to_numpy()).agg("; ".join)
    return pd.Series(rids).map(joined).fillna("").to_numpy(dtype=object)


def _point_trace(pts: pd.DataFrame, status: str, fraction: str, several: bool, webgl: bool,
                 marked: bool = False) -> dict:
    """The results of one status (and fraction); ``marked``: shapes with a centre dot (the second fraction
    on a chart of several)."""
    detected = pts["detected"].to_numpy(dtype=bool)
    symbol = vocabulary.SYMBOL[status]
    symbols = [symbol if d or symbol.endswith("-open") else symbol + "-open" for d in detected]
    if marked:
        symbols = [s + "-dot" for s in symbols]
    value = pts["value_ug_L"].to_numpy(float)
    dl = pts["detection_limit_ug_L"].to_numpy(float)
    measured = np.where(detected, np.char.add(np.char.add("detected, ", np.char.mod("%.4g", value)), " µg/L"),
                        np.char.add(np.char.add("not detected, DL ", np.char.mod("%.4g", dl)), " µg/L"))
    limit = pts["limit_ug_L"].to_numpy(float) if "limit_ug_L" in pts else np.full(len(pts), np.nan)
    exceeded = pts["exceeded"].to_numpy(dtype=object)
    against = np.where(exceeded != "", "above " + exceeded.astype(str),
                       np.where(np.isfinite(limit), "limit " + np.char.mod("%.4g", limit) + " µg/L "
                                + _texts(pts, "limit_table").astype(str), "no single-sample limit"))
    custom = np.column_stack([_texts(pts, c) for c in ("result_text", "unit")] + [measured, against]
                             + [_texts(pts, c) for c in ("sample_id", "lab", "batch", "qualifier")])
    colour = vocabulary.COLOUR[status]
    name = vocabulary.LABEL[status] + f" ({len(pts)})"
    return {
        "type": "scattergl" if webgl else "scatter", "mode": "markers",
        "x": _dates(pts["sampled_at"]), "y": pts["y"].to_numpy(float),
        "name": name, "legendgroup": fraction,
        **({"legendgrouptitle": {"text": fraction + (" (shapes with a centre dot)" if marked else "")}} if several else {}),
        "marker": {"symbol": symbols, "color": colour, "size": 10 if marked else 9,
                   "line": {"width": 1.5, "color": "white" if marked and not symbol.endswith("-open") else colour}},
        "customdata": custom.tolist(),
        "hovertemplate": (
            "%{x|%Y-%m-%d}" + (f" · {fraction}" if several else "")
            + "<br>Result as reported: <b>%{customdata[0]} %{customdata[1]}</b> (%{customdata[2]})"
            + f"<br>{vocabulary.LABEL[status]}: %{{customdata[3]}}"
            + "<br>Sample %{customdata[4]} · lab %{customdata[5]} · batch %{customdata[6]} · qualifier %{customdata[7]}"
            + "<extra></extra>"),
        "meta": {"role": "result", "status": status, "fraction": fraction},
    }


def merged_limit_lines(single: pd.DataFrame) -> list[dict]:
    """Single-sample limits as step lines. Tables setting the same fixed value (for the same duration)
    share one line over the dates any of them is in force, naming every table with its dates; a varying
    (hardness-dependent) line is shared only when it is the same at every date."""
    from dashboard.render.figures import limit_steps

    lines: dict[tuple, dict] = {}
    for lim in limit_steps(single):
        x = np.asarray(lim["x"]).astype("datetime64[s]")
        span = f"{str(x.min())[:10]} to {str(x.max())[:10]}"
        key = ((tuple(x.astype(np.int64)), tuple(np.round(lim["y"], 9))) if lim["varies"]
               else (round(float(lim["y"][0]), 9),)) + (lim["duration"],)
        if key in lines:
            line = lines[key]
            if not lim["varies"]:
                line["x"] = np.union1d(np.asarray(line["x"]).astype("datetime64[s]"), x)
                line["y"] = np.full(len(line["x"]), float(lim["y"][0]))
            for k, v in (("tables", lim["table"]), ("sources", lim["source"]), ("uses", lim["use"]), ("spans", span)):
                line[k].append(v)
        else:
            lines[key] = {**lim, "x": x, "tables": [lim["table"]], "sources": [lim["source"]], "uses": [lim["use"]],
                          "spans": [span]}
    return list(lines.values())


def _limit_label(lim: dict) -> str:
    y = np.asarray(lim["y"], dtype=float)
    value = f"{_num(y.min())}–{_num(y.max())} µg/L (varies with hardness)" if lim["varies"] else f"{_num(y[0])} µg/L"
    tables = " = ".join(lim["tables"])
    return f"Limit {value} · {tables}" + (f" ({lim['duration']})" if lim["duration"] else "")


def _limit_trace(lim: dict, i: int, fraction: str, several: bool) -> dict:
    label = _limit_label(lim)
    n = len(lim["x"])
    text = [""] * (n - 1) + [f"{_num(float(lim['y'][-1]))} µg/L {lim['tables'][0]}"
                             + (f" +{len(lim['tables']) - 1}" if len(lim["tables"]) > 1 else "")]
    sources = "<br>".join(f"{t} ({u}; in force {d}): {_wrap(s)}"
                          for t, u, s, d in zip(lim["tables"], lim["uses"], lim["sources"], lim["spans"]))
    return {
        "type": "scatter", "mode": "lines+text", "x": _dates(lim["x"]), "y": lim["y"],
        "name": label + (f" · {fraction}" if several else ""), "text": text, "textposition": "top left",
        "textfont": {"size": 11, "color": LIMIT_COLOUR}, "legendgroup": fraction,
        "line": {"shape": "hv", "color": LIMIT_COLOUR, "width": 2, "dash": LIMIT_DASHES[i % len(LIMIT_DASHES)]},
        "hovertemplate": (f"{label}<br>%{{y:.4g}} µg/L on %{{x|%Y-%m-%d}}<br>{sources}<extra></extra>"),
        "meta": {"role": "limit", "table": lim["tables"][0], "tables": lim["tables"], "varies": lim["varies"],
                 "fraction": fraction},
    }


def period_traces(rows: pd.DataFrame, fraction: str, several: bool) -> list[dict]:
    """Each period-basis limit with the period values compared with it (one point per sampling date:
    the value of the period ending then), coloured and shaped by the period's status."""
    basis = text_values(rows["basis"]) if "basis" in rows.columns else np.full(len(rows), "", dtype=object)
    keep = np.flatnonzero(~np.isin(basis, SINGLE) & is_site_sample(rows) & np.isfinite(rows["limit_ug_L"].to_numpy(float)))
    if not len(keep) or "period_value_ug_L" not in rows.columns:
        return []
    sub = rows.iloc[keep]
    tables, bases = text_values(sub["limit_table"]), basis[keep]
    out = []
    for table, base in sorted(set(zip(tables, bases))):
        g = sub.iloc[np.flatnonzero((tables == table) & (bases == base))].drop_duplicates("sampled_at")
        g = g.sort_values("sampled_at")
        what = BASIS_WORDS.get(base, base.replace("_", " "))
        values, limits = g["period_value_ug_L"].to_numpy(float), g["limit_ug_L"].to_numpy(float)
        status = text_values(g["status"])
        notes = _texts(g, "note")
        x = _dates(g["sampled_at"])
        suffix = f" · {fraction}" if several else ""
        out.append({
            "type": "scatter", "mode": "lines+markers", "x": x, "y": values, "name": f"{what} ({table}){suffix}",
            "legendgroup": f"period-{fraction}",
            "line": {"color": PERIOD_COLOUR, "width": 1.5, "dash": "dot"},
            "marker": {"symbol": [vocabulary.SYMBOL.get(s, "circle") for s in status], "size": 8,
                       "color": [vocabulary.COLOUR.get(s, PERIOD_COLOUR) for s in status]},
            "customdata": np.column_stack([[vocabulary.LABEL.get(s, s) for s in status], notes,
                                           np.char.mod("%.4g", limits)]).tolist(),
            "hovertemplate": (f"{what} ({table}) as of %{{x|%Y-%m-%d}}: <b>%{{y:.4g}} µg/L</b><br>"
                              "compared with %{customdata[2]} µg/L: %{customdata[0]}<br>%{customdata[1]}<extra></extra>"),
            "meta": {"role": "period", "table": table, "basis": base, "fraction": fraction},
        })
        out.append({
            "type": "scatter", "mode": "lines", "x": x, "y": limits, "name": f"{what} limit {_num(limits[-1])} µg/L · {table}{suffix}",
            "legendgroup": f"period-{fraction}", "line": {"shape": "hv", "color": PERIOD_COLOUR, "width": 2, "dash": "longdash"},
            "hovertemplate": f"{what} limit ({table}): %{{y:.4g}} µg/L<extra></extra>",
            "meta": {"role": "period_limit", "table": table, "basis": base, "fraction": fraction},
        })
    return out


def decade_ticks(values: np.ndarray) -> dict:
    """Tick values and labels of a logarithmic axis at whole decades only (``0.01, 0.1, 1, 10, 100, 1,000``)."""
    v = values[np.isfinite(values) & (values > 0)]
    if not len(v):
        return {}
    lo, hi = math.floor(math.log10(v.min())), math.ceil(math.log10(v.max()))
    hi = max(hi, lo + 1)
    ticks = [10.0 ** k for k in range(lo, hi + 1)]
    return {"tickvals": ticks, "ticktext": [f"{t:,.{max(0, -k)}f}" for t, k in zip(ticks, range(lo, hi + 1))],
            "minor": {"ticks": "outside", "ticklen": 3, "showgrid": False}}


def site_chart(rows_by_fraction: dict, title: str, log_y: bool = False, x_range=None) -> tuple[dict, dict]:
    """The chart of one site and metal (one or several fractions) as a plotly dict, and its points per fraction.

    Parameters
    ----------
    rows_by_fraction : dict
        Fraction -> screened rows of that series (already restricted to the page's filters).
    title : str
    log_y : bool
        Logarithmic concentration axis, labelled at decades.
    x_range : (str, str), optional
        Dates shown (the page's date filter).
    """
    several = len(rows_by_fraction) > 1
    data, points, all_y = [], {}, []
    for k, (fraction, rows) in enumerate(rows_by_fraction.items()):
        pts = chart_points(rows)
        points[fraction] = pts
        webgl = len(pts) > WEBGL_THRESHOLD
        status_of = pts["status"].to_numpy(dtype=object) if len(pts) else np.array([], dtype=object)
        for status in vocabulary.RANKED:
            m = np.flatnonzero(status_of == status)
            if len(m):
                data.append(_point_trace(pts.iloc[m], status, fraction, several, webgl, marked=several and k % 2 == 1))
        single = single_rows(rows)
        for i, lim in enumerate(merged_limit_lines(single)):
            data.append(_limit_trace(lim, i, fraction, several))
            all_y.append(np.asarray(lim["y"], dtype=float))
        data.extend(period_traces(rows, fraction, several))
        if len(pts):
            all_y.append(pts["y"].to_numpy(float))
    n_points = sum(len(p) for p in points.values())
    yaxis = {"title": {"text": "Concentration [µg/L]"},
             "type": "log" if log_y else "linear"}
    if log_y:
        yaxis.update(decade_ticks(np.concatenate(all_y) if all_y else np.zeros(0)))
    else:
        yaxis["rangemode"] = "tozero"
    xaxis = {"title": {"text": "Sampling date"}, "type": "date"}
    if x_range and any(x_range):
        xaxis["range"] = [x_range[0] or None, x_range[1] or None]
    layout = _layout(title={"text": title, "x": 0.01}, margin={"l": 70, "r": 20, "t": 60, "b": 40}, height=540,
                     yaxis=yaxis, xaxis=xaxis, uirevision=title,
                     meta={"webgl": any(len(p) > WEBGL_THRESHOLD for p in points.values()), "n_points": n_points})
    if not n_points:
        layout["annotations"] = [{"text": "No site-sample results for this selection", "showarrow": False,
                                  "xref": "paper", "yref": "paper", "x": 0.5, "y": 0.5}]
    return {"data": data, "layout": layout}, points
