// The dashboard's grids (dash-ag-grid): number formats, the comparison filter typed under the headers,
// and the column chooser. Loaded by Dash from assets/ (no network).

// ---- value formatters (columnDefs: {"valueFormatter": {"function": "formatNumber(params.value, 4)"}}) ----
var dagfuncs = (window.dashAgGridFunctions = window.dashAgGridFunctions || {});

// A number with `digits` significant digits and thousands separators; empty for a missing value.
dagfuncs.formatNumber = function (value, digits) {
    if (value === null || value === undefined || value === "" || !isFinite(value)) { return ""; }
    var v = Number(value);
    if (v !== 0 && (Math.abs(v) >= 1e9 || Math.abs(v) < 1e-4)) { return v.toExponential(digits - 1); }
    return v.toLocaleString("en", {maximumSignificantDigits: digits});
};

// ---- a comparison typed as on paper -> AG Grid's number or date filter model -----------------------
var NUM = "(-?(?:\\d+\\.?\\d*|\\.\\d+)(?:[eE][+-]?\\d+)?)";
var OPS = {">": "greaterThan", ">=": "greaterThanOrEqual", "<": "lessThan", "<=": "lessThanOrEqual",
           "=": "equals", "==": "equals", "!=": "notEqual", "<>": "notEqual"};
var SYMBOL = {greaterThan: ">", greaterThanOrEqual: ">=", lessThan: "<", lessThanOrEqual: "<=",
              equals: "=", notEqual: "!="};

function blankModel(text, filterType) {
    var t = text.trim().toLowerCase();
    if (t === "blank" || t === "empty") { return {filterType: filterType, type: "blank"}; }
    if (t === "not blank" || t === "not empty") { return {filterType: filterType, type: "notBlank"}; }
    return undefined;
}

function parseNumber(text) {
    var blank = blankModel(text, "number");
    if (blank) { return blank; }
    var t = text.trim().replace(/,/g, "");
    var range = new RegExp("^" + NUM + "\\s*(?:\\.\\.|to|–|\\s-\\s)\\s*" + NUM + "$").exec(t);
    if (range) {
        return {filterType: "number", type: "inRange", filter: Number(range[1]), filterTo: Number(range[2])};
    }
    var m = new RegExp("^(>=|<=|!=|<>|==|=|>|<)?\\s*" + NUM + "$").exec(t);
    if (!m) { return null; }
    return {filterType: "number", type: OPS[m[1] || "="], filter: Number(m[2]), filterTo: null};
}

// a year, month or day -> its first and last day
function dayRange(text) {
    var m = /^(\d{4})(?:-(\d{1,2}))?(?:-(\d{1,2}))?$/.exec(text.trim());
    if (!m) { return null; }
    var y = Number(m[1]), mo = m[2] ? Number(m[2]) : null, d = m[3] ? Number(m[3]) : null;
    if ((mo !== null && (mo < 1 || mo > 12)) || (d !== null && (d < 1 || d > 31))) { return null; }
    var pad = function (n) { return (n < 10 ? "0" : "") + n; };
    if (d !== null) { var day = y + "-" + pad(mo) + "-" + pad(d); return [day, day]; }
    if (mo !== null) {
        var last = new Date(Date.UTC(y, mo, 0)).getUTCDate();
        return [y + "-" + pad(mo) + "-01", y + "-" + pad(mo) + "-" + pad(last)];
    }
    return [y + "-01-01", y + "-12-31"];
}

function dateModel(type, from, to) {
    return {filterType: "date", type: type, dateFrom: from + " 00:00:00", dateTo: to ? to + " 00:00:00" : null};
}

function parseDate(text) {
    var blank = blankModel(text, "date");
    if (blank) { return blank; }
    var t = text.trim();
    var range = /^(\S+)\s*(?:\.\.|to|–|\s-\s)\s*(\S+)$/.exec(t);
    if (range) {
        var a = dayRange(range[1]), b = dayRange(range[2]);
        return a && b ? dateModel("inRange", a[0], b[1]) : null;
    }
    var m = /^(>=|<=|!=|<>|==|=|>|<)?\s*(\S+)$/.exec(t);
    if (!m) { return null; }
    var r = dayRange(m[2]);
    if (!r) { return null; }
    var op = OPS[m[1] || "="];
    if (op === "equals") { return r[0] === r[1] ? dateModel("equals", r[0]) : dateModel("inRange", r[0], r[1]); }
    if (op === "notEqual") { return r[0] === r[1] ? dateModel("notEqual", r[0]) : null; }
    if (op === "greaterThan" || op === "lessThanOrEqual") { return dateModel(op, r[1]); }
    return dateModel(op, r[0]);  // >= and < start at the period's first day
}

function modelText(model) {
    if (!model) { return ""; }
    if (model.conditions) { return model.conditions.map(modelText).join(model.operator === "OR" ? " or " : " and "); }
    if (model.type === "blank") { return "blank"; }
    if (model.type === "notBlank") { return "not blank"; }
    if (model.filterType === "date") {
        var from = (model.dateFrom || "").slice(0, 10), to = (model.dateTo || "").slice(0, 10);
        if (model.type === "inRange") { return from + " - " + to; }
        return (model.type === "equals" ? "" : SYMBOL[model.type] + " ") + from;
    }
    if (model.type === "inRange") { return model.filter + " - " + model.filterTo; }
    if (model.filter === null || model.filter === undefined) { return ""; }
    return (model.type === "equals" ? "" : SYMBOL[model.type] + " ") + model.filter;
}

var dagcomponentfuncs = (window.dashAgGridComponentFunctions = window.dashAgGridComponentFunctions || {});

// The floating filter of number and date columns: a text box read as a comparison (see parseNumber,
// parseDate); while the text cannot be read, the box is marked and the filter left as it was.
dagcomponentfuncs.ComparisonFilter = function (props) {
    var React = window.React;
    var kind = props.kind || "number";
    var parse = kind === "date" ? parseDate : parseNumber;
    var state = React.useState(modelText(props.model));
    var text = state[0], setText = state[1];
    var bad = React.useState(false);
    var timer = React.useRef(null);
    React.useEffect(function () {  // the model changed elsewhere (the filter menu, reset, the address)
        var shown = parse(text);
        if (JSON.stringify(shown || null) !== JSON.stringify(props.model || null) && !(text.trim() === "" && !props.model)) {
            setText(modelText(props.model));
            bad[1](false);
        }
    }, [JSON.stringify(props.model || null)]);
    var heading = props.column && props.column.getColDef ? props.column.getColDef().headerName : "";
    var help = kind === "date" ? "e.g. < 2021-01-01, 2021, 2019 - 2021, blank" : "e.g. > 2, <= 0.5, 2 - 5, blank";
    return React.createElement("input", {
        type: "text", className: "comparison-filter" + (bad[0] ? " unreadable" : ""), value: text,
        placeholder: kind === "date" ? "> 2021-01-01" : "> 2",
        "aria-label": "Filter " + heading + " (" + help + ")", title: bad[0] ? "Cannot read this: " + help : help,
        "aria-invalid": bad[0] ? "true" : "false",
        onChange: function (event) {
            var value = event.target.value;
            setText(value);
            if (timer.current) { clearTimeout(timer.current); }
            if (value.trim() === "") { bad[1](false); props.onModelChange(null); return; }
            var model = parse(value);
            bad[1](model === null);
            if (model === null) { return; }
            timer.current = setTimeout(function () { timer.current = null; props.onModelChange(model); }, 350);
        },
        // leaving the box (a click on a download button, Tab) applies what it holds at once, so a download
        // made straight after typing holds the rows of the filter typed, not of the one before
        onBlur: function () {
            if (!timer.current) { return; }
            clearTimeout(timer.current);
            timer.current = null;
            var model = parse(text);
            if (model) { props.onModelChange(model); }
        }
    });
};

// ---- clientside callbacks ------------------------------------------------------------------------------
window.dash_clientside = Object.assign({}, window.dash_clientside, {
    grid: Object.assign({}, (window.dash_clientside || {}).grid, {
        // the column chooser: show the chosen columns of a grid, hide the others
        showColumns: function (shown, columnDefs, gridId) {
            var api = window.dash_ag_grid && window.dash_ag_grid.getApi ? window.dash_ag_grid.getApi(gridId) : null;
            if (!api || !columnDefs) { return window.dash_clientside.no_update; }
            var want = new Set(shown || []);
            var hide = [], show = [];
            columnDefs.forEach(function (c) {
                if (c.pinned) { return; }
                (want.has(c.field) ? show : hide).push(c.field);
            });
            api.setColumnsVisible(show, true);
            api.setColumnsVisible(hide, false);
            return window.dash_clientside.no_update;
        },
        // a download button pressed: the filter and sort models the grid holds at this moment (the rows it
        // shows, or is about to show), not those of its last answered row request, which lag behind while a
        // request is on its way; `kept` (the {prefix}-query store) when the grid is not there
        shownQuery: function () {
            var gridId = arguments[arguments.length - 2], kept = arguments[arguments.length - 1] || {};
            var ctx = window.dash_clientside.callback_context || {};
            var button = ((ctx.triggered || [])[0] || {}).prop_id || "";
            var api = window.dash_ag_grid && window.dash_ag_grid.getApi ? window.dash_ag_grid.getApi(gridId) : null;
            var out = {filterModel: kept.filterModel || {}, sortModel: kept.sortModel || [], error: kept.error,
                       button: button.split(".")[0], at: Date.now()};
            if (api && !api.isDestroyed()) {
                out.filterModel = api.getFilterModel() || {};
                out.sortModel = api.getColumnState().filter(function (c) { return c.sort; })
                    .sort(function (a, b) { return (a.sortIndex || 0) - (b.sortIndex || 0); })
                    .map(function (c) { return {colId: c.colId, sort: c.sort}; });
                delete out.error;  // the server applies the grid's models again and says if it cannot
            }
            return out;
        }
    })
});

// exported for the tests of the parsing rules (tests/test_dashboard_grid_js.py runs them in the browser)
window.tracescreenGrid = {parseNumber: parseNumber, parseDate: parseDate, modelText: modelText};
