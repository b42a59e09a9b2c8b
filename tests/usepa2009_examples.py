"""Load the Unified Guidance worked examples kept in ``tests/data/usepa2009/`` (see the README
there for their origin) and turn them into the accepted-results contract."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import yaml

HERE = Path(__file__).resolve().parent / "data" / "usepa2009"


def example(name: str) -> dict:
    """The YAML of ``example_<name>.yaml``."""
    return yaml.safe_load((HERE / f"example_{name}.yaml").read_text(encoding="utf-8"))


def cells(values) -> tuple[np.ndarray, np.ndarray]:
    """Values and non-detect flags from cells such as ``"<5"`` and ``"7.5"``."""
    text = [str(v).strip() for v in values]
    nd = np.array([t.startswith("<") for t in text])
    x = np.array([float(t.lstrip("<")) for t in text])
    return x, nd


def results_frame(wells: dict[str, list], start: str = "2000-01-01", freq: str = "QS",
                  analyte: str = "arsenic", fraction: str = "total") -> pd.DataFrame:
    """Accepted results (the loader's contract) for {well: [cells in time order]}."""
    rows = []
    for well, vals in wells.items():
        x, nd = cells(vals)
        dates = pd.date_range(start, periods=len(x), freq=freq)
        for d, v, n in zip(dates, x, nd):
            rows.append({"site_id": well, "analyte": analyte, "fraction": fraction, "sampled_at": d,
                         "value_ug_L": np.nan if n else v, "detected": not n,
                         "detection_limit_ug_L": v if n else np.nan, "sample_type": "sample",
                         "qualifier_meaning": "nondetect" if n else ""})
    return pd.DataFrame(rows)


def network(background: list[str], compliance: list[str], comparison: str = "auto",
            stage: str = "detection", background_to: str | None = None) -> pd.DataFrame:
    wells = background + compliance
    return pd.DataFrame({"site_id": wells, "role": ["background"] * len(background) + ["compliance"] * len(compliance),
                         "well_group": "all", "comparison": comparison, "stage": stage,
                         "background_from": pd.NaT,
                         "background_to": pd.Timestamp(background_to) if background_to else pd.NaT})
