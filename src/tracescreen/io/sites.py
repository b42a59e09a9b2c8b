"""The sites file: where each monitoring site is, which water uses it serves, its default hardness.

CSV columns: ``site_id, name, latitude, longitude, uses, hardness_mg_L``. ``uses`` is a
``;``-separated list of water uses (e.g. ``drinking_water;freshwater_aquatic``) matched against
the ``use`` of each limit table. ``hardness_mg_L`` (as CaCO3) is the default for samples that carry
no hardness of their own. ``latitude``/``longitude`` are decimal degrees (WGS 84).

Optional columns: defaults (:data:`INPUT_DEFAULTS`) for the other water-chemistry inputs of
computed limits, ``ph``, ``doc_mg_L`` (dissolved organic carbon), ``temperature_C``; and the site
attributes limit entries can be scoped by (``limits.schema.SCOPE_ATTRIBUTES``):
``water_body_type`` (lotic, lentic), ``sampling_point_type`` (tap, entry_point, distribution,
source, well), ``water_category`` (inland, other), ``protection_level`` (99, 95, 90, 80).
An empty cell means "not known": the site then gets every entry.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen._internal.printable import printable
from tracescreen.io.plausible import MAX_HARDNESS_MG_L

SITE_COLUMNS = ("site_id", "name", "latitude", "longitude", "uses", "hardness_mg_L")
#: Optional numeric columns and their valid ranges.
INPUT_DEFAULTS = {"ph": (0.0, 14.0), "doc_mg_L": (0.0, 1000.0), "temperature_C": (-5.0, 100.0)}


class SitesError(ValueError):
    """A sites file that cannot be used (message names file, row and problem)."""


def load_sites(path: str | Path) -> pd.DataFrame:
    """Read and check a sites CSV.

    Returns
    -------
    DataFrame
        ``site_id, name, latitude, longitude, uses`` (tuple of use names), ``hardness_mg_L``.
    """
    p = Path(path)
    try:
        df = pd.read_csv(p, dtype=str, keep_default_na=False, encoding="utf-8-sig")
    except FileNotFoundError:
        raise SitesError(f"{p}: sites file not found") from None
    except (UnicodeDecodeError, pd.errors.ParserError, pd.errors.EmptyDataError, ValueError) as exc:
        raise SitesError(f"{p}: not a readable CSV file ({exc.__class__.__name__})") from None
    df.columns = [c.strip() for c in df.columns]
    missing = [c for c in ("site_id", "uses") if c not in df.columns]
    if missing:
        raise SitesError(f"{p}: missing column(s) {', '.join(missing)}; expected {', '.join(SITE_COLUMNS)}")
    for c in SITE_COLUMNS:
        if c not in df.columns:
            df[c] = ""
    raw = df
    df = df[list(SITE_COLUMNS)].apply(lambda c: c.str.strip())
    rows = np.arange(len(df)) + 2
    problems = []
    empty = df["site_id"] == ""
    problems += [f"{p}: row {r}: site_id is empty" for r in rows[empty.to_numpy()]]
    dup = df["site_id"].duplicated(keep="first") & ~empty
    problems += [f"{p}: row {r}: site_id '{printable(s[:80])}' appears twice" for r, s in zip(rows[dup.to_numpy()], df["site_id"][dup])]
    out = pd.DataFrame({"site_id": df["site_id"], "name": df["name"]})
    for c, lo, hi in (("latitude", -90, 90), ("longitude", -180, 180), ("hardness_mg_L", 0, MAX_HARDNESS_MG_L)):
        num = pd.to_numeric(df[c].replace("", np.nan), errors="coerce")
        bad = (df[c] != "") & (num.isna() | (num < lo) | (num > hi))
        within = f"in [{lo}, {hi:g}]"
        if c == "hardness_mg_L":  # a hardness of 0 makes hardness-formula limits 0 or infinite
            bad |= num == 0
            within = f"above 0 and at most {hi:,.0f} mg/L as CaCO3"
        problems += [f"{p}: row {r}: {c} '{printable(v[:40])}' is not a number {within}"
                     for r, v in zip(rows[bad.to_numpy()], df[c][bad])]
        out[c] = num.astype(float)
    out["uses"] = [tuple(u.strip().lower() for u in s.split(";") if u.strip()) for s in df["uses"]]
    problems += _optional_columns(raw, out, rows, p)
    if problems:
        raise SitesError(problems[0] + (f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""))
    return out.reset_index(drop=True)


def _optional_columns(raw: pd.DataFrame, out: pd.DataFrame, rows: np.ndarray, p: Path) -> list[str]:
    """Water-chemistry defaults and scope attributes, where the file has the columns (added to ``out``)."""
    from tracescreen.limits.schema import SCOPE_ATTRIBUTES

    problems = []
    for c, (lo, hi) in INPUT_DEFAULTS.items():
        if c not in raw.columns:
            continue
        text = raw[c].str.strip()
        num = pd.to_numeric(text.replace("", np.nan), errors="coerce")
        bad = (text != "") & (num.isna() | (num < lo) | (num > hi))
        problems += [f"{p}: row {r}: {c} '{v}' is not a number in [{lo:g}, {hi:g}]"
                     for r, v in zip(rows[bad.to_numpy()], text[bad])]
        out[c] = num.astype(float).to_numpy()
    for c, allowed in SCOPE_ATTRIBUTES.items():
        if c not in raw.columns:
            continue
        text = raw[c].str.strip().str.lower().str.replace(" ", "_").str.replace("%", "")
        bad = (text != "") & ~text.isin(allowed)
        problems += [f"{p}: row {r}: {c} '{v}' is not one of {', '.join(allowed)} (or empty)"
                     for r, v in zip(rows[bad.to_numpy()], raw[c][bad])]
        out[c] = text.to_numpy(dtype=object)
    return problems


def site_uses(sites: pd.DataFrame) -> pd.DataFrame:
    """One row per (site_id, use)."""
    return sites[["site_id", "uses"]].explode("uses").dropna().rename(columns={"uses": "use"}).reset_index(drop=True)


def use_warnings(sites: pd.DataFrame | None, table_uses) -> list[str]:
    """Warnings for sites whose results no limit table can reach: ``uses`` empty, or naming no loaded table.

    Such a site gets ``no_limit`` for every result; that is what the sites file says, but it is far
    more often a typing slip (``drinking water`` for ``drinking_water``) than a decision, so it is
    said, with the sites and uses named (a few of each).
    """
    if sites is None or not len(sites):
        return []
    known = set(table_uses)
    out = []
    empty = [s for s, u in zip(sites["site_id"], sites["uses"]) if not u]
    if empty:
        out.append(f"{_some(empty)} {'give' if len(empty) > 1 else 'gives'} no water use (column uses): no limit applies to their results")
    by_use: dict[str, list[str]] = {}
    for s, uses in zip(sites["site_id"], sites["uses"]):
        for u in uses:
            if u not in known:
                by_use.setdefault(u, []).append(s)
    for u, ss in by_use.items():
        out.append(f"{_some(ss)}: use '{printable(u[:60])}' is the use of no loaded limit table (loaded: "
                   f"{', '.join(sorted(known)) or 'none'})")
    return out


def _some(site_ids: list[str]) -> str:
    shown = ", ".join(printable(s[:40]) for s in site_ids[:5])
    return f"site{'s' if len(site_ids) > 1 else ''} {shown}" + (f" and {len(site_ids) - 5} more" if len(site_ids) > 5 else "")


def sites_name(path) -> str:
    """The sites file's name in messages ("the sites file" without one)."""
    return Path(path).name if path else "the sites file"
