"""The dashboard's tables: AG Grid grids (``dash-ag-grid``) with typed filters, frozen key columns,
a column chooser, number formats per column and links to charts.

A grid is described by a list of :class:`Column`; :func:`server_grid` makes a grid whose rows the
server filters, sorts and serves block by block (AG Grid's infinite row model, see
:mod:`dashboard.views.grid_query`), :func:`client_grid` a small grid holding its rows.

Typing in the row under the headers filters: text columns by "contains"; number and date columns
read a comparison typed as on paper (``> 2``, ``<= 0.5``, ``2 - 5``, ``< 2021-01-01``, ``2021``,
``blank``), parsed in the browser by ``assets/grid.js`` into AG Grid's own number and date filter
models (which the column's filter menu shows too).
"""

from __future__ import annotations

from dataclasses import dataclass

import dash_ag_grid as dag
from dash import dcc, html

from dashboard.views.grid_query import Display
from tracescreen import vocabulary

#: what the row under the headers accepts, in the page's words
FILTER_HELP = ("Type in the row under the headers to filter: words for text columns; for numbers and "
               "dates a comparison such as > 2, <= 0.5, 2 - 5, < 2021-01-01 or 2021; blank for empty cells. "
               "Click a header (or press Enter on it) to sort; shift-click to sort by several columns.")

STATUS_DISPLAY = Display(words=dict(vocabulary.LABEL))


@dataclass(frozen=True)
class Column:
    """One column of a grid.

    kind : ``text``, ``number``, ``date``, ``status`` (a status code shown in the vocabulary's words,
    glyph and colour), ``link`` (a Markdown link, e.g. to a chart) or ``words`` (long text, cut with
    its full text in the tooltip).
    """

    field: str
    heading: str
    kind: str = "text"
    pinned: bool = False
    digits: int = 4  # significant digits shown for numbers
    width: int | None = None
    hidden: bool = False  # not shown until chosen in the column chooser


def displays(columns: list[Column]) -> dict:
    """The columns shown in words (status columns), by field: for the server's filter and sort."""
    return {c.field: STATUS_DISPLAY for c in columns if c.kind == "status"}


def headings(columns: list[Column]) -> dict:
    """Column headings by field (for messages in the page's words)."""
    return {c.field: c.heading for c in columns}


def _status_classes(field: str) -> dict:
    return {f"status-text status-{s}": f"params.data && params.data.{field}_code === '{s}'" for s in vocabulary.STATUSES}


def column_def(c: Column) -> dict:
    """AG Grid column definition of a :class:`Column`."""
    d: dict = {"field": c.field, "headerName": c.heading, "hide": c.hidden, "sortable": True,
               "headerTooltip": c.heading}
    if c.pinned:
        d["pinned"] = "left"
    if c.width:
        d["width"] = c.width
    if c.kind == "number":
        d.update(filter="agNumberColumnFilter", type="rightAligned",
                 floatingFilterComponent="ComparisonFilter", floatingFilterComponentParams={"kind": "number"},
                 filterParams={"inRangeInclusive": True, "buttons": ["reset"], "maxNumConditions": 2},
                 valueFormatter={"function": f"formatNumber(params.value, {int(c.digits)})"})
    elif c.kind == "date":
        d.update(filter="agDateColumnFilter", floatingFilterComponent="ComparisonFilter",
                 floatingFilterComponentParams={"kind": "date"},
                 filterParams={"inRangeInclusive": True, "buttons": ["reset"], "maxNumConditions": 2},
                 width=c.width or 130)
    elif c.kind == "link":
        d.update(cellRenderer="markdown", filter=False, sortable=False, width=c.width or 90)
    else:
        d.update(filter="agTextColumnFilter",
                 filterParams={"buttons": ["reset"], "maxNumConditions": 2, "debounceMs": 300})
        if c.kind == "status":
            d["cellClassRules"] = _status_classes(c.field)
            d["filterParams"] = {**d["filterParams"], "defaultOption": "startsWith"}
            d["width"] = c.width or 230
        if c.kind == "words":
            d["tooltipField"] = c.field
            d["width"] = c.width or 300
    return d


_GRID_OPTIONS = {
    "enableCellTextSelection": True, "ensureDomOrder": True, "tooltipShowDelay": 300,
    "suppressDragLeaveHidesColumns": True, "animateRows": False, "rowHeight": 32, "headerHeight": 36,
    "floatingFiltersHeight": 36, "enableFilterHandlers": True,
    "localeText": {"noRowsToShow": "No rows match these filters"},
}
_DEFAULT_COL = {"resizable": True, "floatingFilter": True, "suppressHeaderMenuButton": False, "minWidth": 70}


def server_grid(grid_id: str, columns: list[Column], page_size: int = 25, height: int = 620,
                filter_model: dict | None = None, sort_model: list | None = None, selectable: bool = False,
                row_id: str | None = None) -> dag.AgGrid:
    """A grid whose rows the server serves (infinite row model, one page of ``page_size`` rows per block)."""
    options = {**_GRID_OPTIONS, "pagination": True, "paginationPageSize": page_size,
               "paginationPageSizeSelector": False, "cacheBlockSize": page_size, "maxBlocksInCache": 20,
               "rowBuffer": 0}
    if selectable:
        options["rowSelection"] = {"mode": "multiRow", "checkboxes": True, "headerCheckbox": False,
                                   "enableClickSelection": False}
    extra = {"getRowId": f"params.data.{row_id}"} if row_id else {}
    return dag.AgGrid(
        id=grid_id, columnDefs=[column_def(c) for c in columns], defaultColDef=_DEFAULT_COL, **extra,
        rowModelType="infinite", dashGridOptions=options, filterModel=filter_model or None,
        columnState=[{"colId": s["colId"], "sort": s["sort"], "sortIndex": i} for i, s in enumerate(sort_model or [])]
        or None,
        className="ag-theme-quartz grid", style={"height": f"{height}px", "width": "100%"},
    )


def client_grid(grid_id: str, columns: list[Column], rows: list[dict], page_size: int = 15,
                height: int | None = None, selectable: bool = False, row_id: str | None = None) -> dag.AgGrid:
    """A small grid holding its rows in the browser (filters and sorting in the browser)."""
    options = {**_GRID_OPTIONS, "pagination": len(rows) > page_size, "paginationPageSize": page_size,
               "paginationPageSizeSelector": False}
    if selectable:
        options["rowSelection"] = {"mode": "multiRow", "checkboxes": True, "headerCheckbox": True,
                                   "selectAll": "filtered", "enableClickSelection": False}
    extra = {"getRowId": f"params.data.{row_id}"} if row_id else {}
    if height is None:
        options["domLayout"] = "autoHeight"
    return dag.AgGrid(
        id=grid_id, columnDefs=[column_def(c) for c in columns], defaultColDef=_DEFAULT_COL, rowData=rows, **extra,
        dashGridOptions=options, className="ag-theme-quartz grid",
        style={"height": f"{height}px" if height else None, "width": "100%"},
    )


def column_chooser(grid_id: str, columns: list[Column]) -> html.Details:
    """A "Columns" menu: a checkbox per column that is not frozen; the browser shows or hides it
    (``assets/grid.js``, ``tracescreen.showColumns``)."""
    options = [{"label": f" {c.heading}", "value": c.field} for c in columns if not c.pinned]
    return html.Details([
        html.Summary("Columns", className="button"),
        dcc.Checklist(id=f"{grid_id}-columns", options=options,
                      value=[c.field for c in columns if not c.pinned and not c.hidden],
                      className="column-checklist", labelClassName="column-choice"),
    ], className="column-chooser")


def grid_toolbar(prefix: str, grid_id: str, columns: list[Column], buttons: list) -> html.Div:
    """Download buttons, the row count and the column chooser above a grid."""
    return html.Div([*buttons, html.Span(id=f"{prefix}-count", className="count-text", role="status"),
                     column_chooser(grid_id, columns)], className="toolbar")
