// The overview matrix arrives as HTML text (escaped on the server, dashboard/matrix.py) and is put
// in place with the browser's own parser: far faster than hundreds of components. Dash never gives
// the #ov-matrix div children of its own, so React leaves what is put here alone.
window.dash_clientside = Object.assign({}, window.dash_clientside, {
    tracescreen: Object.assign({}, (window.dash_clientside || {}).tracescreen, {
        showMatrix: function (html) {
            var el = document.getElementById("ov-matrix");
            if (el) { el.innerHTML = html || ""; }
            return "matrix-wrap";
        }
    })
});
