"""Site-and-metal logic: choices, the chart and its summary for one series (plain functions)."""

from __future__ import annotations

import numpy as np

from dashboard.state.session import SessionData
from dashboard.views.matrix import Filters, row_mask


def site_options(session: SessionData) -> list[dict]:
    """Site dropdown options, ``"S01 — Name"``."""
    out = []
    for s in session.site_ids:
        name = session.site_name(s)
        out.append({"label": f"{s} — {name}" if name != s else s, "value": s})
    return out


def _pairs(session: SessionData) -> dict[str, list[str]]:
    def compute():
        keys = np.unique(session.series_key)
        n_f = max(len(session.fractions), 1)
        site = keys // (len(session.analytes) * n_f)
        analyte = (keys // n_f) % len(session.analytes)
        out: dict[str, list[str]] = {}
        for s, a in sorted(set(zip(site.tolist(), analyte.tolist()))):
            if s >= 0 and a >= 0:
                out.setdefault(session.site_ids[s], []).append(session.analytes[a])
        return out

    return session.derived("site_analytes", compute)


def analyte_options(session: SessionData, site: str | None) -> list[dict]:
    """Metals measured at a site."""
    return [{"label": a, "value": a} for a in _pairs(session).get(site, session.analytes)]


def fractions_of(session: SessionData, site, analyte) -> list[str]:
    """Fractions measured for a site and metal."""
    return [f for f in session.fractions if session.series_bounds(site, analyte, f)[1] > session.series_bounds(site, analyte, f)[0]]


def default_selection(session: SessionData, site=None, analyte=None, fraction=None):
    """Fill a missing or unknown site/metal/fraction with the first available one (``"all"``: every fraction)."""
    pairs = _pairs(session)
    if site not in pairs:
        site = next(iter(pairs), None)
    metals = pairs.get(site, [])
    if analyte not in metals:
        analyte = metals[0] if metals else None
    if fraction not in session.fractions and fraction != "all":
        fraction = "total" if "total" in session.fractions else (session.fractions or [None])[0]
    return site, analyte, fraction


def fraction_options(session: SessionData) -> list[dict]:
    """Fraction choices: each fraction, and all of them on one chart."""
    return [{"label": f, "value": f} for f in session.fractions] + [{"label": "all fractions", "value": "all"}]


#: the columns the chart, its hover, its table and the trend read (a series' rows are taken with these only)
CHART_COLUMNS = ("_rid", "site_id", "analyte", "fraction", "sampled_at", "sample_id", "sample_type", "result_text",
                 "unit", "value_ug_L", "detection_limit_ug_L", "detected", "qualifier", "lab", "batch", "status",
                 "basis", "limit_ug_L", "limit_table", "duration", "use", "source", "note", "period_value_ug_L")


def selection_rows(session: SessionData, site, analyte, fraction, filters: Filters | None = None) -> dict:
    """Fraction -> screened rows of that series passing the page's filters (site samples; the same rows
    the overview counts), for one fraction or every fraction (``"all"``); the chart's columns only."""
    wanted = session.fractions if fraction == "all" else [fraction]
    cols = [c for c in CHART_COLUMNS if c in session.screened.columns]
    out = {}
    for f in wanted:
        lo, hi = session.series_bounds(site, analyte, f)
        if hi <= lo:
            continue
        if filters is None or filters == Filters():
            out[f] = session.screened.iloc[lo:hi][cols]
        else:
            mask = row_mask(session, filters.without_fraction(), lo, hi)
            out[f] = session.screened.iloc[lo + np.flatnonzero(mask)][cols]
    if fraction != "all" and not out and fraction in session.fractions:
        out[fraction] = session.screened.iloc[0:0][cols]
    return out


def qc_rows(session: SessionData, site, analyte, fraction) -> int:
    """Screening rows of QC samples (blanks, duplicates) of the selection: not plotted."""
    from dashboard.render.figures import is_site_sample

    wanted = session.fractions if fraction == "all" else [fraction]
    n = 0
    for f in wanted:
        rows = session.series(site, analyte, f)
        n += int((~is_site_sample(rows)).sum()) if len(rows) else 0
    return n
