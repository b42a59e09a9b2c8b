"""Build small QC tables and result tables for the laboratory QC review tests."""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.reading import QC_COLUMNS, empty_qc

_TEXT = ("file", "sheet", "qc_type", "element", "qc_sample_id", "parent_sample_id", "lab", "batch", "prep_batch",
         "run", "method", "technique", "analyte", "fraction", "lab_flag", "internal_standard")


def qc(*rows: dict) -> pd.DataFrame:
    """A QC table (reading.QC_COLUMNS) from partial rows; text defaults "", numbers NaN."""
    base = empty_qc()
    out = []
    for i, r in enumerate(rows):
        row = {c: "" if c in _TEXT else (pd.NaT if c.endswith("_at") else np.nan) for c in QC_COLUMNS}
        row.update({"file": "qc.csv", "row": i + 2, "lab": "Lab A", "batch": "B1", "detected": True})
        row.update(r)
        out.append(row)
    df = pd.DataFrame(out, columns=QC_COLUMNS)
    for c in ("analysed_at", "prepared_at"):
        df[c] = pd.to_datetime(df[c])
    df["detected"] = df["detected"].astype(bool)
    return df.astype({c: base[c].dtype for c in QC_COLUMNS if c not in ("analysed_at", "prepared_at")})


def results(*rows: dict) -> pd.DataFrame:
    """Accepted results (the columns the review reads) from partial rows."""
    out = []
    for i, r in enumerate(rows):
        row = {"file": "lab.csv", "sheet": "", "row": i + 2, "site_id": "S1", "sample_id": f"X{i + 1}",
               "sampled_at": pd.Timestamp("2024-05-01"), "analyte": "lead", "fraction": "total", "result_text": "",
               "unit": "ug/L", "value_ug_L": np.nan, "detected": True, "detection_limit_ug_L": 0.1, "qualifier": "",
               "sample_type": "sample", "parent_sample_id": "", "lab": "Lab A", "batch": "B1",
               "analysed_at": pd.NaT}
        row.update(r)
        if not row["detected"]:
            row["value_ug_L"] = np.nan
        out.append(row)
    df = pd.DataFrame(out)
    df["analysed_at"] = pd.to_datetime(df["analysed_at"])
    return df
