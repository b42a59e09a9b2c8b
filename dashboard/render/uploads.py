"""Upload previews and confirmations as HTML (logic in :mod:`dashboard.views.uploads`)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from dashboard.state.store import DataStore
from dashboard.views.uploads import UploadError, add_token, preview_upload

#: the accepted rows shown as read, at most
PREVIEW_ROWS = 500
REVISION_WORDS = {"new": "new result", "unchanged": "already in the data (not added again)",
                  "revised": "revises an earlier result (replaces it)"}


def preview_columns():
    """Columns of the preview of accepted rows: what the file said and what tracescreen read."""
    from dashboard.render.grid import Column

    return [Column("row", "Row", "number", pinned=True, width=80, digits=9), Column("site_id", "Site", width=90),
            Column("sample_id", "Sample", width=120), Column("sampled_at", "Sampled", "date"),
            Column("analyte", "Metal", width=110), Column("fraction", "Fraction", width=100),
            Column("result_text", "Result as reported", width=150), Column("unit", "Unit as reported", width=130),
            Column("value_ug_L", "Value [µg/L]", "number", width=120),
            Column("detection_limit_ug_L", "Detection limit [µg/L]", "number", width=170),
            Column("detected", "Detected", width=110), Column("qualifier", "Qualifier", width=100),
            Column("revision", "Compared with the data", width=300)]


def preview_rows(accepted: pd.DataFrame) -> list[dict]:
    """The first accepted rows as grid records (text as reported, numbers as read)."""
    from dashboard.state.frames import plain_frame

    head = plain_frame(accepted.head(PREVIEW_ROWS))
    out = []
    for r in head.to_dict("records"):
        value, dl = r.get("value_ug_L"), r.get("detection_limit_ug_L")
        out.append({
            "row": int(r["row"]) if pd.notna(r.get("row")) else None, "site_id": r.get("site_id", ""),
            "sample_id": r.get("sample_id", ""),
            "sampled_at": "" if pd.isna(r.get("sampled_at")) else str(pd.Timestamp(r["sampled_at"]).date()),
            "analyte": r.get("analyte", ""), "fraction": r.get("fraction", ""),
            "result_text": r.get("result_text", ""), "unit": r.get("unit", ""),
            "value_ug_L": None if value is None or not np.isfinite(value) else float(value),
            "detection_limit_ug_L": None if dl is None or not np.isfinite(dl) else float(dl),
            "detected": "detected" if r.get("detected") else "not detected", "qualifier": r.get("qualifier", ""),
            "revision": REVISION_WORDS.get(r.get("revision", ""), ""),
        })
    return out


# ---- views (plain functions called by the page's callbacks) ------------------------------------
def upload_preview_view(store: DataStore, file: dict | None, mapping: dict | None, reading: dict | None = None,
                        dataset_key: str | None = None):
    """Preview block, pending token and the add button's ``disabled`` for an upload."""
    from dash import html

    from dashboard.render.grid import Column, client_grid

    if not file:
        return "", None, True
    try:
        prev = preview_upload(store, file.get("contents"), file.get("filename"),
                              (mapping or {}).get("contents"), (mapping or {}).get("filename"), reading, dataset_key)
    except UploadError as exc:
        return html.Div(str(exc), className="error", id="up-error", role="alert"), None, True
    rej = prev.rejected
    shown = rej.head(500)
    cols = [c for c in ("file", "sheet", "row", "reason") if c in shown.columns]
    cols += [c for c in shown.columns if c not in cols]
    block = [
        html.P([html.B(prev.filename), f": {prev.rows_read:,} rows read = ",
                html.Span(f"{prev.accepted:,} accepted", id="up-accepted"), " + ",
                html.Span(f"{prev.set_aside:,} set aside", id="up-set-aside"), " (laboratory QC and other rows that "
                "are not results to screen) + ", html.Span(f"{len(rej):,} rejected", id="up-rejected"), "."],
               className="summary"),
        html.P([f"Of the accepted results, {prev.new:,} are new, ",
                html.Span(f"{prev.unchanged:,} are already in the data", id="up-unchanged"),
                f" and will not be added again, and {prev.revised:,} revise earlier results (the earlier values "
                "are replaced). Adding this file adds ", html.B(f"{prev.adds:,}", id="up-adds"), " results."],
               className="summary"),
    ]
    block += [html.P(w, className="notice") for w in prev.warnings]
    if prev.accepted:
        block.append(html.H3("Accepted rows, as read"
                             + (f" (first {PREVIEW_ROWS})" if prev.accepted > PREVIEW_ROWS else "")))
        block.append(client_grid("up-preview-table", preview_columns(), preview_rows(prev.accepted_rows), page_size=10))
    if len(rej):
        block.append(html.H3("Rejected rows and reasons" + (" (first 500)" if len(rej) > 500 else "")))
        block.append(client_grid(
            "up-rejected-table", [Column(c, c, "words" if c == "reason" else "text") for c in cols],
            shown[cols].astype(str).to_dict("records"), page_size=15))
    if prev.adds == 0:
        block.append(html.P("Nothing in this file can be added: every accepted result is already in the data."
                            if prev.accepted else "Nothing in this file can be added.", className="error",
                            id="up-nothing"))
    return html.Div(block), (prev.token if prev.adds else None), prev.adds == 0


def add_upload_view(session_for, token: str | None, dataset_key: str | None):
    """New dataset key and a confirmation after adding a previewed upload to the session."""
    from dash import html, no_update

    if not token:
        return no_update, html.P("Preview a file with results to add first.", className="error")
    key = add_token(dataset_key, token)
    session = session_for(key)
    n_results = int(session.rid.max()) + 1 if len(session.rid) else 0
    return key, html.P(f"Added. This session now holds {n_results:,} results; every page shows "
                       "them.", id="up-added-text", className="ok", role="status")
