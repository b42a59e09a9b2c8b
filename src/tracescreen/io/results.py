"""The accepted-results table (the contract between reading and screening) and the load outcome.

Every data row of every file read ends up in exactly one of three tables: ``accepted`` (results to
screen, :data:`ACCEPTED_COLUMNS`), ``set_aside`` (rows that are not results for screening: lab QC,
analytes outside the registry, results qualified unusable) or ``rejected`` (rows that need
attention, with the reason). Rows read = accepted + set aside + rejected, per file.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from pandas.api.types import union_categoricals

ACCEPTED_COLUMNS = [
    "file", "sheet", "row", "site_id", "sample_id", "sampled_at", "analyte", "fraction",
    "result_text", "unit", "value_ug_L", "detected", "detection_limit_ug_L", "qualifier",
    "sample_type", "parent_sample_id", "lab", "batch", "analysed_at", "hardness_mg_L",
    "uncertainty_ug_L", "qualifier_meaning", "ph", "doc_mg_L", "temperature_C", "quantitation_limit_ug_L",
]
#: Water-chemistry inputs of computed limits (io/chemistry_rows.py): pH, DOC [mg/L], temperature [°C];
#: NaN when the file reports none for the sample.
INPUT_COLUMNS = ("ph", "doc_mg_L", "temperature_C")


#: Text columns of the accepted table (held as pandas categoricals of str).
TEXT_COLUMNS = ("file", "sheet", "site_id", "sample_id", "analyte", "fraction", "result_text", "unit",
                "qualifier", "sample_type", "parent_sample_id", "lab", "batch", "qualifier_meaning")


@dataclass
class LoadResult:
    """Accepted rows, rows set aside (not results for screening), rejected rows with reasons, and
    one line per file read. Rows read = accepted + set aside + rejected."""

    accepted: pd.DataFrame
    rejected: pd.DataFrame
    files: pd.DataFrame
    warnings: list[str] = field(default_factory=list)
    set_aside: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=["file", "sheet", "row", "reason"]))


#: Columns of the rows not accepted (set aside or rejected) before their original cells: provenance,
#: reason and what the row was read as (analyte name from the registry, or as written; the sample
#: type as written; value and censoring level in µg/L). The original cells follow, so a lab QC
#: row keeps its spike amount, recovery and control-limit columns as the lab wrote them
#: (tracescreen.retest.labqc reads them). Rejected rows show provenance, reason and cells only.
NOT_ACCEPTED_COLUMNS = ["file", "sheet", "row", "reason", "analyte", "fraction", "sample_type", "batch",
                        "value_ug_L", "detected", "detection_limit_ug_L", "unit"]


def not_accepted_frame(raw, mask: np.ndarray, reasons: np.ndarray, parsed: dict[str, np.ndarray]) -> pd.DataFrame:
    """The rows of ``raw`` in ``mask``: provenance, reason, parsed columns, then the original cells
    (an original header equal to a parsed column's name is kept as ``<header> (file)``)."""
    head = pd.DataFrame({"file": raw.file, "sheet": raw.sheet, "row": raw.rows[mask],
                         "reason": np.asarray(reasons, dtype=object).astype(str)})
    for c in NOT_ACCEPTED_COLUMNS[4:]:
        if c in parsed:
            head[c] = parsed[c]
    cells = raw.cells.take(np.flatnonzero(mask))  # (a boolean .loc of a 1M-row table: 2-3x slower)
    cells = cells.drop(columns=[c for c in cells.columns if str(c).startswith("__")])
    cells = cells.rename(columns={c: f"{c} (file)" for c in cells.columns if c in head.columns})
    return pd.concat([head, cells.reset_index(drop=True)], axis=1)


#: Reasons of rows set aside start with this (they are stored with the rejected rows of a
#: workspace, so that its counts stay rows read = stored + rejected, and told apart by it).
SET_ASIDE_PREFIX = "not screened: "


def split_set_aside(rows: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(rejected, set aside) rows of a table of rows not accepted, told apart by their reason; the
    reasons of the rows set aside are returned without :data:`SET_ASIDE_PREFIX`. The parsed
    columns (:data:`NOT_ACCEPTED_COLUMNS`) are kept for the rows set aside only."""
    aside = rows["reason"].astype(str).str.startswith(SET_ASIDE_PREFIX).to_numpy(dtype=bool) if len(rows) else \
        np.zeros(0, dtype=bool)
    out = rows[aside].reset_index(drop=True)
    out["reason"] = out["reason"].astype(str).str.removeprefix(SET_ASIDE_PREFIX)
    # rejected rows are shown as the file has them: provenance, reason and the original cells
    parsed = [c for c in NOT_ACCEPTED_COLUMNS[4:] if c in rows.columns]
    rejected = rows[~aside].drop(columns=parsed).reset_index(drop=True)
    rejected = rejected.rename(columns={c: str(c).removesuffix(" (file)") for c in rejected.columns
                                        if str(c).endswith(" (file)") and str(c).removesuffix(" (file)") in parsed})
    return rejected, out




def empty_accepted() -> pd.DataFrame:
    """An accepted-results table with no rows and the contract's columns and types."""
    return normalise_empty()


def normalise_empty() -> pd.DataFrame:
    """An empty frame of rows not accepted (the columns every normalised sheet gives)."""
    no_text = pd.Categorical([], categories=pd.Index([], dtype="str"))
    cols = {c: pd.Series(no_text) if c in TEXT_COLUMNS else pd.Series(dtype=str)
            for c in ACCEPTED_COLUMNS}
    for c in ("value_ug_L", "detection_limit_ug_L", "hardness_mg_L", "uncertainty_ug_L", "quantitation_limit_ug_L") \
            + INPUT_COLUMNS:
        cols[c] = pd.Series(dtype=float)
    cols["row"] = pd.Series(dtype="int64")
    cols["detected"] = pd.Series(dtype=bool)
    cols["sampled_at"] = pd.Series(dtype="datetime64[ns]")
    cols["analysed_at"] = pd.Series(dtype="datetime64[ns]")
    return pd.DataFrame(cols)


def concat_accepted(frames: list[pd.DataFrame]) -> pd.DataFrame:
    """Concatenate accepted tables, keeping text columns categorical (union of sorted categories)."""
    if len(frames) == 1:
        return frames[0]
    text = [c for c in frames[0].columns if c in TEXT_COLUMNS]
    out = pd.concat([f.drop(columns=text) for f in frames], ignore_index=True)
    for c in text:  # categories are unions of the files' categories (codes are recoded, not text)
        cats = [pd.Categorical(f[c]) for f in frames]
        cats = [x.set_categories(x.categories.astype("str")) for x in cats]  # one categories dtype
        out[c] = union_categoricals(cats, sort_categories=True)
    return out[frames[0].columns]

