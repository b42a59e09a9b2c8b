"""Data-quality logic: per-file counts, rejection reasons, rejected rows and rows set aside (plain
functions)."""

from __future__ import annotations

import pandas as pd

from dashboard.state.session import SessionData
from tracescreen.io.loading import SET_ASIDE_PREFIX

_FIRST = ["file", "sheet", "row", "reason"]


def rejected_frame(session: SessionData) -> pd.DataFrame:
    """Rejected rows: ``file, sheet, row, reason`` first, then the original cells."""
    rej = session.rejected
    if rej is None or rej.empty:
        return pd.DataFrame(columns=_FIRST)
    first = [c for c in _FIRST if c in rej.columns]
    return rej[first + [c for c in rej.columns if c not in first]]


def set_aside_frame(session: SessionData) -> pd.DataFrame:
    """Rows set aside (not results to screen: lab QC, reference material, analytes tracescreen does
    not screen, results qualified unusable): ``file, sheet, row, reason`` first, then the cells."""
    aside = getattr(session, "set_aside", None)
    if aside is None or aside.empty:
        return pd.DataFrame(columns=_FIRST)
    aside = aside.assign(reason=aside["reason"].astype(str).str.removeprefix(SET_ASIDE_PREFIX))
    first = [c for c in _FIRST if c in aside.columns]
    return aside[first + [c for c in aside.columns if c not in first]]


def _counts(reasons: pd.Series) -> pd.DataFrame:
    kind = reasons.astype(str).str.replace(r"'[^']*'", "'…'", regex=True).str.strip()
    return kind.value_counts().rename_axis("problem").reset_index(name="rows")


def set_aside_counts(session: SessionData) -> pd.DataFrame:
    """Rows set aside per kind, most frequent first (quoted values grouped as in :func:`reason_counts`)."""
    aside = set_aside_frame(session)
    if aside.empty:
        return pd.DataFrame({"problem": [], "rows": []})
    return _counts(aside["reason"]).rename(columns={"problem": "kind"})


def reason_counts(session: SessionData) -> pd.DataFrame:
    """Rejected rows per reason, most frequent first.

    A reason often quotes the offending value (``sampled_at '2019-02-30' is not a date``); with
    quoted values replaced by ``'…'`` the same problem groups together.
    """
    rej = rejected_frame(session)
    if rej.empty:
        return pd.DataFrame({"problem": [], "rows": []})
    return _counts(rej["reason"])


FILE_COLUMNS = ["file", "sheet", "rows_read", "accepted", "set_aside", "rejected", "blank_rows", "sha256"]


