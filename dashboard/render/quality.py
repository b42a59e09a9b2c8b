"""Data-quality tables as HTML (frames from :mod:`dashboard.views.quality`)."""

from __future__ import annotations

import pandas as pd
from dash import html

from dashboard.state.session import SessionData
from dashboard.views.quality import FILE_COLUMNS, reason_counts, set_aside_counts


def html_table(frame: pd.DataFrame, table_id: str) -> html.Table:
    """A small frame as an HTML table (headers as given, cells as text)."""
    head = html.Thead(html.Tr([html.Th(c) for c in frame.columns]))
    body = html.Tbody([html.Tr([html.Td(f"{v:,}" if isinstance(v, int) else str(v)) for v in row])
                       for row in frame.itertuples(index=False)])
    return html.Table([head, body], id=table_id, className="plain")


def file_table(session: SessionData) -> html.Table:
    """Rows read, accepted, set aside and rejected per file and sheet, with its SHA-256."""
    files = session.files[[c for c in FILE_COLUMNS if c in session.files.columns]].copy()
    if "sha256" in files:
        files["sha256"] = files["sha256"].astype(str).str[:12] + "…"
    for c in files.columns:
        if pd.api.types.is_integer_dtype(files[c].dtype):
            files[c] = files[c].astype(object).map(int)
    return html_table(files, "dq-files-table")


def _count_table(counts: pd.DataFrame, table_id: str, none_text: str):
    """Counts (column ``rows``) as an HTML table, or a sentence when there are none."""
    if counts.empty:
        return html.P(none_text)
    return html_table(counts.assign(rows=counts["rows"].astype(object).map(int)), table_id)


def reason_table(session: SessionData):
    """Rejected rows counted by reason."""
    return _count_table(reason_counts(session), "dq-reasons-table", "No rejected rows.")


def set_aside_table(session: SessionData):
    """Rows set aside (not screened) counted by kind."""
    return _count_table(set_aside_counts(session), "dq-aside-kinds-table", "No rows set aside.")
