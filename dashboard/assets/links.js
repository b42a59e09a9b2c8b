// Links drawn inside HTML fragments (the overview matrix) navigate within the app, like dcc.Link:
// push the new address and tell Dash's location component, instead of reloading the page.
document.addEventListener("click", function (event) {
    var link = event.target.closest && event.target.closest("a.app-link, #matrix-table a");
    if (!link || event.defaultPrevented || event.button !== 0 ||
        event.metaKey || event.ctrlKey || event.shiftKey || event.altKey) { return; }
    event.preventDefault();
    window.history.pushState({}, "", link.getAttribute("href"));
    window.dispatchEvent(new CustomEvent("_dashprivate_pushstate"));
    window.scrollTo(0, 0);
});
