"""Limit-table logic: the loaded tables, their entries in words, and the sites each applies to."""

from __future__ import annotations

import math

import pandas as pd

from dashboard.state.session import SessionData
from tracescreen.limits import words

ENTRY_COLUMNS = ["analyte", "fraction", "limit", "hardness_range", "scope", "duration", "basis",
                 "effective_from", "effective_to", "note"]


def _num(v) -> bool:
    return v is not None and not (isinstance(v, float) and math.isnan(v)) and v is not pd.NA


def _fmt(v) -> str:
    return f"{float(v):.6g}"


def formula_text(entry) -> str:
    """A limit entry in words (the engine's wording, tracescreen.limits.words: a value in µg/L, the US EPA
    hardness formula exp(m·ln H + b) × CF, or a computed form), without its conditions."""
    return words.limit_in_words(entry)


def _date(v) -> str:
    return "" if v is None or pd.isna(v) else str(pd.Timestamp(v).date())


def entry_rows(entries: pd.DataFrame) -> list[dict]:
    """Entries of one table as display rows."""
    rows = []
    for e in entries.to_dict("records"):
        lo, hi = e.get("hardness_min"), e.get("hardness_max")
        rng = ""
        if _num(lo) or _num(hi):
            rng = f"{_fmt(lo) if _num(lo) else '…'}–{_fmt(hi) if _num(hi) else '…'} mg/L CaCO3"
        rows.append({
            "analyte": e.get("analyte", ""), "fraction": e.get("fraction", ""),
            "limit": words.entry_words({**e, "hardness_min": None, "hardness_max": None, "scope": ""}),
            "hardness_range": rng, "scope": e.get("scope") or "",
            "duration": e.get("duration") or "", "basis": e.get("basis") or "",
            "effective_from": _date(e.get("effective_from")), "effective_to": _date(e.get("effective_to")),
            "note": e.get("note") or "",
        })
    return rows


def sites_for_use(session: SessionData, use: str) -> list[str] | None:
    """Site ids whose uses include ``use``; ``None`` when no sites file was given (all apply)."""
    if session.sites is None:
        return None
    sites = session.sites
    has = sites["uses"].map(lambda u: use in (u if isinstance(u, (tuple, list)) else str(u).split(";")))
    return sorted(sites.loc[has, "site_id"].astype(str))


