"""The sites file: where each monitoring site is, which water uses it serves, its default hardness.

CSV columns: ``site_id, name, latitude, longitude, uses, hardness_mg_L``. ``uses`` is a
``;``-separated list of water uses (e.g. ``drinking_water;freshwater_aquatic``) matched against
the ``use`` of each limit table. ``hardness_mg_L`` (as CaCO3) is the default for samples that carry
no hardness of their own. ``latitude``/``longitude`` are decimal degrees (WGS 84).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

SITE_COLUMNS = ("site_id", "name", "latitude", "longitude", "uses", "hardness_mg_L")


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
    except (UnicodeDecodeError, pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
        raise SitesError(f"{p}: not a readable CSV file ({exc.__class__.__name__})") from None
    df.columns = [c.strip() for c in df.columns]
    missing = [c for c in ("site_id", "uses") if c not in df.columns]
    if missing:
        raise SitesError(f"{p}: missing column(s) {', '.join(missing)}; expected {', '.join(SITE_COLUMNS)}")
    for c in SITE_COLUMNS:
        if c not in df.columns:
            df[c] = ""
    df = df[list(SITE_COLUMNS)].apply(lambda c: c.str.strip())
    rows = np.arange(len(df)) + 2
    problems = []
    empty = df["site_id"] == ""
    problems += [f"{p}: row {r}: site_id is empty" for r in rows[empty.to_numpy()]]
    dup = df["site_id"].duplicated(keep="first") & ~empty
    problems += [f"{p}: row {r}: site_id '{s}' appears twice" for r, s in zip(rows[dup.to_numpy()], df["site_id"][dup])]
    out = pd.DataFrame({"site_id": df["site_id"], "name": df["name"]})
    for c, lo, hi in (("latitude", -90, 90), ("longitude", -180, 180), ("hardness_mg_L", 0, 10000)):
        num = pd.to_numeric(df[c].replace("", np.nan), errors="coerce")
        bad = (df[c] != "") & (num.isna() | (num < lo) | (num > hi))
        problems += [f"{p}: row {r}: {c} '{v}' is not a number in [{lo}, {hi}]"
                     for r, v in zip(rows[bad.to_numpy()], df[c][bad])]
        out[c] = num.astype(float)
    out["uses"] = [tuple(u.strip().lower() for u in s.split(";") if u.strip()) for s in df["uses"]]
    if problems:
        raise SitesError(problems[0] + (f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""))
    return out.reset_index(drop=True)


def site_uses(sites: pd.DataFrame) -> pd.DataFrame:
    """One row per (site_id, use)."""
    return sites[["site_id", "uses"]].explode("uses").dropna().rename(columns={"uses": "use"}).reset_index(drop=True)
