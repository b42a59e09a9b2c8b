"""Table logic: the exceedance rows and downloads (filter, sort and paging: :mod:`dashboard.views.grid_query`)."""

from __future__ import annotations

import pandas as pd

from dashboard.state.session import SessionData
from tracescreen import vocabulary

#: rows that need attention: above a limit, or undecided (detection limit too high, or above the
#: calibrated range at or below the limit)
ATTENTION_STATUSES = vocabulary.ATTENTION
EXCEEDANCE_COLUMNS = [
    "site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit",
    "value_ug_L", "detection_limit_ug_L", "limit_table", "use", "duration", "limit_ug_L",
    "ratio", "status", "source", "note",
]


def exceedance_rows(session: SessionData) -> pd.DataFrame:
    """Every site-sample screening row that exceeds or is undecided, engine columns, by site/date."""

    def compute():
        scr = session.screened
        mask = scr["status"].isin(ATTENTION_STATUSES).to_numpy()
        if "sample_type" in scr.columns:
            mask = mask & (scr["sample_type"] == "sample").to_numpy(dtype=bool)  # on the codes
        cols = [c for c in EXCEEDANCE_COLUMNS if c in scr.columns]
        return scr.loc[mask, cols].reset_index(drop=True)

    return session.derived("exceedance_rows", compute)


# ---- downloads -------------------------------------------------------------------------------------
def _written(writer, df, suffix: str, *args) -> bytes:
    import tempfile
    from pathlib import Path

    from dashboard.state.frames import plain_frame

    with tempfile.TemporaryDirectory(prefix="tracescreen-download-") as tmp:
        path = Path(tmp) / f"table{suffix}"
        if args:
            writer({args[0]: plain_frame(df)}, path)
        else:
            writer(plain_frame(df), path)
        return path.read_bytes()


def to_csv_bytes(df: pd.DataFrame) -> bytes:
    """The rows as the engine writes CSV (ISO dates, formula-safe text; ``tracescreen.outputs``)."""
    from tracescreen.report.writers import write_csv

    return _written(write_csv, df, ".csv")


def to_xlsx_bytes(df: pd.DataFrame, sheet: str = "exceedances") -> bytes:
    """The rows as the engine writes XLSX (one sheet; ``tracescreen.outputs``)."""
    from tracescreen.report.writers import write_xlsx

    return _written(write_xlsx, df, ".xlsx", sheet)
