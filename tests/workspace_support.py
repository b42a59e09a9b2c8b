"""Helpers for the workspace tests: small lab files and snapshots of a workspace's state."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.io import loading
from tracescreen.store.workspace import open_workspace

HEADER = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result", "unit",
          "detection_limit", "lab"]
ANALYTES = ["arsenic", "lead", "copper", "zinc", "cadmium", "nickel", "chromium", "mercury"]


def lab_rows(n: int, seed: int = 0, first_sample: int = 0) -> pd.DataFrame:
    """``n`` valid lab rows (canonical headers, all text); eight analytes per sample."""
    rng = np.random.default_rng(seed)
    i = np.arange(n)
    sample = first_sample + i // len(ANALYTES)
    return pd.DataFrame({
        "site_id": "S" + (sample % 17).astype(str).astype(object),
        "sample_id": "W-" + sample.astype(str).astype(object),
        "sampled_at": (pd.Timestamp("2016-01-04") + pd.to_timedelta(sample % 3000, unit="D"))
        .strftime("%Y-%m-%d"),
        "analyte": np.array(ANALYTES, dtype=object)[i % len(ANALYTES)],
        "fraction": np.where(rng.random(n) < 0.5, "total", "dissolved"),
        "result": np.round(rng.lognormal(1.0, 1.0, n), 3).astype(str),
        "unit": "ug/L",
        "detection_limit": "0.1",
        "lab": "Harrowgate Analytical (invented)",
    }, columns=HEADER)


def write_lab_csv(path: Path, rows: pd.DataFrame) -> Path:
    rows.to_csv(path, index=False)
    return path


def same_results(got: pd.DataFrame, want: pd.DataFrame) -> None:
    """Equal accepted-results tables: same columns, dtypes and values; text columns categorical
    (their category lists may differ by unused categories)."""
    assert list(got.columns) == list(want.columns)
    for c in loading.TEXT_COLUMNS:
        assert isinstance(got[c].dtype, pd.CategoricalDtype), c
    plain = {c: str for c in loading.TEXT_COLUMNS}
    pd.testing.assert_frame_equal(got.astype(plain), want.astype(plain))


def snapshot(directory) -> dict[str, pd.DataFrame]:
    """Everything a user can see in a workspace, as DataFrames."""
    with open_workspace(directory) as ws:
        return {"imports": ws.imports(), "files": ws.files(), "sheets": ws.sheets(),
                "current": ws.current_results(), "history": ws.results_history(),
                "rejected": ws.rejected_rows(), "runs": ws.screening_runs()}


def assert_same_state(a: dict, b: dict) -> None:
    for key in a:
        pd.testing.assert_frame_equal(a[key], b[key], obj=key)
