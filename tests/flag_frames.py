"""Builders of small results / screening tables in the DEVELOPERS.md contract, for flag and QC tests."""

from __future__ import annotations

import numpy as np
import pandas as pd

RESULT_DEFAULTS = {
    "file": "lab.csv", "sheet": "", "site_id": "S1", "sample_id": "", "analyte": "lead",
    "fraction": "total", "unit": "µg/L", "qualifier": "", "sample_type": "sample",
    "parent_sample_id": "", "lab": "LabA", "batch": "", "analysed_at": pd.NaT,
    "hardness_mg_L": np.nan, "uncertainty_ug_L": np.nan, "detection_limit_ug_L": 1.0,
}


def quarterly_series(values, start="2015-01-01", **kw) -> list[dict]:
    """Rows of one series sampled every quarter from ``start`` (sample ids Q0, Q1, ...)."""
    dates = pd.date_range(start, periods=len(values), freq="QS")
    return [dict(sample_id=f"Q{i}", sampled_at=d, value=v, **kw) for i, (d, v) in enumerate(zip(dates, values))]


def results(rows: list[dict]) -> pd.DataFrame:
    """Accepted results from dicts; ``value`` is the detected value, ``nd=True`` makes a non-detect
    at ``detection_limit_ug_L``."""
    out = []
    for i, r in enumerate(rows):
        row = dict(RESULT_DEFAULTS)
        row.update({k: v for k, v in r.items() if k not in ("value", "nd")})
        nd = bool(r.get("nd", False))
        row["row"] = i + 2
        row.setdefault("sample_id", "")
        if not row["sample_id"]:
            row["sample_id"] = f"X{i}"
        row["detected"] = not nd
        row["value_ug_L"] = np.nan if nd else float(r["value"])
        row["result_text"] = (f"<{row['detection_limit_ug_L']}" if nd else str(r["value"]))
        out.append(row)
    df = pd.DataFrame(out)
    df["sampled_at"] = pd.to_datetime(df["sampled_at"])
    df["analysed_at"] = pd.to_datetime(df["analysed_at"])
    return df


def screening(rows: list[dict], limits: list[tuple[str, float]] = (("who-dw", 10.0),)) -> pd.DataFrame:
    """The engine's own screening table (:func:`tracescreen.screening.screen.screen`) of ``rows`` against
    one limit table per ``(table, limit_ug_L)``, each giving that limit for every analyte and fraction
    of the rows (single-sample basis, use drinking_water; a table id's ``-`` is written ``_``)."""
    import tempfile
    from pathlib import Path

    from tracescreen.limits.load import load_limits
    from tracescreen.screening.screen import screen

    res = results(rows)
    pairs = res[["analyte", "fraction"]].drop_duplicates().itertuples(index=False)
    entries = "".join(f"  - {{analyte: {a}, fraction: {f}, value: {{v}}}}\n" for a, f in pairs)
    with tempfile.TemporaryDirectory() as tmp:
        paths = []
        for table, value in limits:
            path = Path(tmp) / f"{table.replace('-', '_')}.yaml"
            path.write_text(f"id: {table.replace('-', '_')}\nname: {table}\nsource: constructed for a test\n"
                            f"use: drinking_water\nunit: µg/L\nentries:\n" + entries.replace("{v}", repr(float(value))),
                            encoding="utf-8")
            paths.append(path)
        return screen(res, load_limits(paths))
