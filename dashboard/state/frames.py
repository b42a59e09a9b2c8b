"""Frames between the dashboard and the engine: the session's categoricals as text, engine frames, file counts."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

if TYPE_CHECKING:
    from dashboard.state.session import SessionData


def file_counts(accepted: pd.DataFrame, rejected: pd.DataFrame) -> pd.DataFrame:
    """Rows read, accepted and rejected per input file (rows read = accepted + rejected)."""
    acc = accepted.groupby("file", observed=True).size().rename("accepted")
    rej = rejected.groupby("file", observed=True).size().rename("rejected") if len(rejected) else None
    out = pd.concat([acc, rej], axis=1) if rej is not None else acc.to_frame()
    out = out.fillna(0).astype("int64")
    if "rejected" not in out:
        out["rejected"] = 0
    out["rows_read"] = out["accepted"] + out["rejected"]
    return out.reset_index(names="file")[["file", "rows_read", "accepted", "rejected"]]


def text_values(series: pd.Series) -> np.ndarray:
    """A text column as an object array of str ("" for missing).

    For a categorical this takes only the categories in use: a slice of a million-row session
    shares categories with the whole, and converting all of them would dominate a callback.
    """
    if isinstance(series.dtype, pd.CategoricalDtype):
        codes = series.array.codes
        cats = np.asarray(series.dtype.categories, dtype=object)  # no copy for object categories
        out = np.full(len(codes), "", dtype=object)
        used = codes >= 0
        out[used] = cats[codes[used]]
        return out
    return series.astype(object).where(series.notna(), "").astype(str).to_numpy(dtype=object)


def plain_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy with categorical text columns turned back into plain strings ("" for missing)."""
    out = frame.copy()
    for col in out.columns:
        if isinstance(out[col].dtype, pd.CategoricalDtype):
            out[col] = pd.Series(text_values(out[col]), index=out.index, dtype=str)
    return out


def engine_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """The engine's text convention for a slice of session rows: missing text is "" again.

    Categorical columns stay categorical (the codes of missing values point to an added ""
    category); no text is materialised, so this is cheap on a million rows.
    """
    changed = {}
    for col in frame.columns:
        values = frame[col]
        if isinstance(values.dtype, pd.CategoricalDtype) and "" not in values.dtype.categories:
            codes = values.array.codes
            if not (codes < 0).any():
                continue
            cats = values.dtype.categories
            codes = np.where(codes < 0, len(cats), codes)
            dtype = pd.CategoricalDtype(cats.append(pd.Index([""], dtype=cats.dtype)))
            changed[col] = pd.Categorical.from_codes(codes, dtype=dtype, validate=False)
    return frame.assign(**changed) if changed else frame


def accepted_from_session(session: SessionData) -> pd.DataFrame:
    """The accepted result rows behind a session (one row per result, engine columns only; text as
    categoricals with "" for missing, see :func:`engine_frame`)."""
    starts = np.flatnonzero(np.r_[True, session.rid[1:] != session.rid[:-1]]) if len(session.rid) else []
    added = {"hardness_used_mg_L", "hardness_origin", "limit_table", "use", "duration", "basis",
             "limit_ug_L", "ratio", "status", "source", "note", "_rid", "campaign", "entry_id", "compared_value_ug_L",
             "period_id", "period_value_ug_L", "limit_fraction", "ph_used", "doc_used_mg_L", "temperature_used_C",
             "limit_scope"}
    acc = session.screened.iloc[starts]
    out = acc[[c for c in acc.columns if c not in added]].reset_index(drop=True)
    return engine_frame(out.assign(**_sample_inputs(acc)))


def _sample_inputs(screened_rows: pd.DataFrame) -> dict:
    """The sample's own inputs of computed limits, which screening replaces by the values it used:
    the hardness where it was the sample's own (a site default or a Ca/Mg hardness is found again when
    the rows are screened anew), and pH, DOC and temperature as used (the sample's, else the site's:
    the same value either way)."""
    out = {}
    if "hardness_used_mg_L" in screened_rows.columns:
        own = (screened_rows["hardness_origin"] == "sample").to_numpy(dtype=bool) \
            if "hardness_origin" in screened_rows.columns else np.zeros(len(screened_rows), dtype=bool)
        out["hardness_mg_L"] = np.where(own, screened_rows["hardness_used_mg_L"].to_numpy(float), np.nan)
    for used, col in (("ph_used", "ph"), ("doc_used_mg_L", "doc_mg_L"), ("temperature_used_C", "temperature_C")):
        if used in screened_rows.columns and col not in screened_rows.columns:
            out[col] = screened_rows[used].to_numpy(float)
    return out
