"""Limit-table logic: the loaded tables, their entries in words, and the sites each applies to."""

from __future__ import annotations

import math

import pandas as pd

from dashboard.state.session import SessionData
from tracescreen.limits import words


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




def no_limit_reason(session: SessionData, site: str, analyte: str, fraction: str) -> str:
    """Why a series has no applicable limit, in words (from the loaded tables and the site's uses)."""
    entries = session.limits.entries
    of_metal = entries[entries["analyte"].astype(str) == analyte]
    if of_metal.empty:
        return f"no loaded limit table lists {analyte}"
    uses = None
    if session.sites is not None and "uses" in session.sites.columns:
        hit = session.sites.loc[session.sites["site_id"].astype(str) == str(site), "uses"]
        if len(hit):
            u = hit.iloc[0]
            uses = set(u if isinstance(u, (tuple, list)) else str(u).split(";"))
    for_site = of_metal if uses is None else of_metal[of_metal["use"].astype(str).isin(uses)]
    if for_site.empty:
        listed = ", ".join(sorted(set(of_metal["use"].astype(str))))
        mine = ", ".join(sorted(uses or [])) or "none"
        return f"the tables for {analyte} protect {listed}; this site's uses are {mine}"
    same = for_site[for_site["fraction"].astype(str).isin([fraction, "", "any"])]
    if same.empty:
        other = " and ".join(sorted(set(for_site["fraction"].astype(str))))
        tables = ", ".join(sorted(set(for_site["table_id"].astype(str))))
        return f"the tables for this site's uses ({tables}) have {other} criteria only for {analyte}"
    return ("a table lists it, but no entry was in force on these dates or in this site's scope, or the "
            "inputs of a computed limit (hardness, pH, DOC) were missing")
