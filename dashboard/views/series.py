"""Site-and-metal logic: choices, the chart and its summary for one series (plain functions)."""

from __future__ import annotations

import numpy as np

from dashboard.render.figures import (
    result_points,
)
from dashboard.state.session import SessionData


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


def default_selection(session: SessionData, site=None, analyte=None, fraction=None):
    """Fill a missing or unknown site/metal/fraction with the first available one."""
    pairs = _pairs(session)
    if site not in pairs:
        site = next(iter(pairs), None)
    metals = pairs.get(site, [])
    if analyte not in metals:
        analyte = metals[0] if metals else None
    if fraction not in session.fractions:
        fraction = "total" if "total" in session.fractions else (session.fractions or [None])[0]
    return site, analyte, fraction


def series_points(session: SessionData, site, analyte, fraction):
    """Screened rows of one series and its points (:func:`dashboard.figures.result_points`),
    kept per session for the chart and the trend that follows it."""
    def compute():
        rows = session.series(site, analyte, fraction)
        return rows, result_points(rows)

    return session.cached("series_points", (site, analyte, fraction), compute, size=8)


