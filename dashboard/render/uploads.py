"""Upload previews and confirmations as HTML (logic in :mod:`dashboard.views.uploads`)."""

from __future__ import annotations

from dashboard.state.store import DataStore
from dashboard.views.uploads import UploadError, add_token, preview_upload


# ---- views (plain functions called by the page's callbacks) ------------------------------------
def upload_preview_view(store: DataStore, file: dict | None, mapping: dict | None):
    """Preview block, pending token and the add button's ``disabled`` for an upload."""
    from dash import dash_table, html

    if not file:
        return "", None, True
    try:
        prev = preview_upload(store, file.get("contents"), file.get("filename"),
                              (mapping or {}).get("contents"), (mapping or {}).get("filename"))
    except UploadError as exc:
        return html.Div(str(exc), className="error", id="up-error"), None, True
    rej = prev.rejected
    shown = rej.head(500)
    cols = [c for c in ("file", "sheet", "row", "reason") if c in shown.columns]
    cols += [c for c in shown.columns if c not in cols]
    block = [
        html.P([html.B(prev.filename), f": {prev.rows_read:,} rows read, ",
                html.Span(f"{prev.accepted:,} accepted", id="up-accepted"), ", ",
                html.Span(f"{prev.set_aside:,} set aside (not results to screen)", id="up-set-aside"), ", ",
                html.Span(f"{len(rej):,} rejected", id="up-rejected"), "."], className="summary"),
    ]
    if len(rej):
        block.append(html.P("Rejected rows and reasons" + (" (first 500)" if len(rej) > 500 else "") + ":"))
        block.append(dash_table.DataTable(
            id="up-rejected-table", columns=[{"name": c, "id": c} for c in cols],
            data=shown[cols].astype(str).to_dict("records"), page_size=15,
            style_table={"overflowX": "auto"},
            style_cell={"fontFamily": "inherit", "fontSize": "13px", "textAlign": "left",
                        "whiteSpace": "normal", "maxWidth": "420px"},
            style_data_conditional=[{"if": {"column_id": "reason"}, "fontWeight": "600"}],
        ))
    if prev.accepted == 0:
        block.append(html.P("Nothing in this file can be added.", className="error"))
    return html.Div(block), (prev.token if prev.accepted else None), prev.accepted == 0


def add_upload_view(session_for, token: str | None, dataset_key: str | None):
    """New dataset key and a confirmation after adding a previewed upload to the session."""
    from dash import html, no_update

    if not token:
        return no_update, html.P("Preview a file with accepted rows first.", className="error")
    key = add_token(dataset_key, token)
    session = session_for(key)
    n_results = int(session.rid.max()) + 1 if len(session.rid) else 0
    return key, html.P(f"Added. This session now holds {n_results:,} results; every page shows "
                       "them.", id="up-added-text", className="ok")
