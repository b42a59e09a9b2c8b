// The state of each page in its address (dashboard/views/url_state.py reads it back).
//
// A page's controls call tracescreenUrl.push() (a clientside callback, dashboard/pages/_shared.py
// register_url_state). It writes the address with history.pushState (a new entry, so Back returns to
// the previous view; quick successive changes such as typing replace the entry instead), records the
// address in the "url-pushed" store and tells Dash's location component. The router then sees an
// address whose view is already on screen and leaves the page alone (dashboard/app.py). Back and
// Forward (popstate) clear the record, so the page is drawn again from the address.
(function () {
    var state = (window.tracescreenUrl = window.tracescreenUrl || {last: 0, lastPath: null, shared: ""});

    function empty(v) {
        return v === null || v === undefined || v === "" || (Array.isArray(v) && v.length === 0);
    }

    function setProps(id, props) {
        if (window.dash_clientside && window.dash_clientside.set_props) { window.dash_clientside.set_props(id, props); }
    }

    // names[i] is the parameter of values[i]; kinds: "text", "list", "date", "grid" (a grid's query
    // store: {filterModel, sortModel} written as NAME_filter and NAME_sort); defaults are left out.
    state.push = function (path, names, kinds, defaults, sharedNames, sharedLinks, values) {
        var noUpdate = window.dash_clientside.no_update;
        if (window.location.pathname !== path) { return noUpdate; }
        var params = new URLSearchParams();
        names.forEach(function (name, i) {
            var v = values[i], kind = kinds[i];
            if (kind === "grid") {
                if (v && v.filterModel && Object.keys(v.filterModel).length) {
                    params.set(name + "_filter", JSON.stringify(v.filterModel));
                }
                if (v && v.sortModel && v.sortModel.length) { params.set(name + "_sort", JSON.stringify(v.sortModel)); }
                return;
            }
            if (kind === "kept") { v = v ? v[name] : null; }
            if (empty(v) || v === defaults[i]) { return; }
            if (Array.isArray(v)) { v = v.join(","); }
            if (kind === "date") { v = String(v).slice(0, 10); }
            params.set(name, String(v));
        });
        if (sharedNames.length) {  // the filters every page shares: carried by the navigation links
            var shared = new URLSearchParams();
            sharedNames.forEach(function (n) { if (params.has(n)) { shared.set(n, params.get(n)); } });
            state.shared = shared.toString();
            sharedLinks.forEach(function (link) {
                setProps(link[0], {href: link[1] + (state.shared ? "?" + state.shared : "")});
            });
        }
        var search = params.toString() ? "?" + params.toString() : "";
        if (search === window.location.search) { state.lastPath = path; return noUpdate; }
        var now = Date.now();
        var replace = state.lastPath !== path || now - state.last < 1500;
        window.history[replace ? "replaceState" : "pushState"]({}, "", path + search);
        state.last = now;
        state.lastPath = path;
        setProps("url-pushed", {data: path + search});
        setTimeout(function () { window.dispatchEvent(new CustomEvent("_dashprivate_pushstate")); }, 0);
        return noUpdate;
    };

    // Back / Forward: the page is drawn again from the address (registered before Dash's own listener)
    window.addEventListener("popstate", function () {
        setProps("url-pushed", {data: null});
        state.last = 0;
    });
})();

window.dash_clientside = Object.assign({}, window.dash_clientside, {
    shell: Object.assign({}, (window.dash_clientside || {}).shell, {
        // the navigation link of the page on screen is marked (class and aria-current)
        markActive: function (pathname, ids, paths) {
            var classes = paths.map(function (p) {
                return p === pathname || (p !== "/" && pathname && pathname.indexOf(p + "/") === 0)
                    ? "nav-link active" : "nav-link";
            });
            setTimeout(function () {
                ids.forEach(function (id, i) {
                    var el = document.getElementById(id);
                    if (!el) { return; }
                    if (classes[i] === "nav-link active") { el.setAttribute("aria-current", "page"); }
                    else { el.removeAttribute("aria-current"); }
                });
            }, 0);
            return classes;
        }
    })
});
