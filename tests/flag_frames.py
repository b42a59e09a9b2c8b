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
    """A screening table: every site sample against every ``(table, limit_ug_L)``; QC rows get
    ``qc_sample``. The status rules are those of README.md#output-screeningcsv (equal meets)."""
    res = results(rows)
    lim = pd.DataFrame([{"limit_table": t, "limit_ug_L": v, "use": "drinking_water",
                         "duration": "", "basis": "single_sample", "source": f"source of {t}"}
                        for t, v in limits])
    site = res[res["sample_type"].eq("sample")].merge(lim, how="cross")
    det = site["detected"]
    site["status"] = np.select(
        [det & (site["value_ug_L"] > site["limit_ug_L"]), det,
         site["detection_limit_ug_L"] <= site["limit_ug_L"]],
        ["exceeds", "meets", "nondetect_meets"], "nondetect_inconclusive")
    qc = res[~res["sample_type"].eq("sample")].assign(status="qc_sample")
    out = pd.concat([site, qc], ignore_index=True)
    out["ratio"] = out["value_ug_L"] / out["limit_ug_L"]
    out["note"] = ""
    return out
