"""Benchmark: the dashboard with N results loaded (default 1,000,000).

Uses the lab file of ``bench_screen.py`` (same generator, same seed) and the shipped limit tables,
then measures, in the same run:

* server-side time of every data callback, called directly (the functions the pages register) 50
  times each: cold (50 different inputs, nothing cached) and warm (the same inputs again, from the
  per-session memo); median and p95. Callbacks: overview (worst, and latest campaign), map, site chart
  (one fraction and all fractions), the trend that follows the chart, the exceedance grid's rows
  (filtered and sorted, then paged), the retest request's rows, the trends grid's rows;
* the time until the worker thread has the trend table and the retest list of the base data;
* first draw of every page in headless Chromium (Debian's /usr/bin/chromium) against a dashboard
  started as ``python -m dashboard`` in its own process: from navigation to the page's content drawn,
  with plotly.js and the grid's script already in the browser's cache (one page visited first);
* that process's peak resident memory (VmHWM).

Reference in the same run: ``pandas.read_csv`` of the same file (the time to merely read it).
Goals: p95 <= 100 ms per callback, every page's first draw <= 1.5 s, dashboard process <= 1.5 GB.
The machine is shared: each figure is printed with the load average of the moment.

    python bench/bench_dashboard.py [--n 1000000] [--calls 50] [--no-browser | --browser-only]
"""

from __future__ import annotations

import argparse
import os
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))
sys.path.insert(0, str(ROOT))
from bench_screen import make_file  # noqa: E402  (the same generated lab file as the screen benchmark)

CHROME_FLAGS = ["--disable-gpu", "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE localhost , EXCLUDE 127.0.0.1"]
GOAL_MS, GOAL_DRAW_S = 100, 1.5


def _stats(ms: list[float]) -> str:
    a = np.asarray(ms)
    return f"median {np.median(a):7.1f} ms   p95 {np.percentile(a, 95):7.1f} ms   max {a.max():7.1f} ms"


def _load() -> str:
    """The 1-minute load average (the machine is shared; figures depend on it)."""
    return f"{os.getloadavg()[0]:.2f}"


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _limits() -> list[str]:
    return [str(p) for p in sorted((ROOT / "limits").glob("*.yaml"))]


def _peak_mb(pid: int, field: str = "VmHWM") -> float:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1]) / 1024
    return float("nan")


def _fn(page: str, name: str):
    return sys.modules[f"pages.{page}"].callbacks.functions()[name]


def _report(name: str, ms: list[float], out: dict) -> None:
    out[name] = ms
    flag = "ok" if np.percentile(ms, 95) <= GOAL_MS else "ABOVE GOAL"
    print(f"  {name:<28} {_stats(ms)}   [{flag}: p95 goal {GOAL_MS} ms]   load {_load()}", flush=True)


def _timed(fn, inputs) -> list[float]:
    ms = []
    for args in inputs:
        t = time.perf_counter()
        fn(*args)
        ms.append((time.perf_counter() - t) * 1000)
    return ms


def _inputs(session, n_calls: int) -> dict:
    """Fifty different inputs per callback (filters, series, grid queries)."""
    from dashboard.views.series import _pairs

    pairs = [(s, a) for s, metals in _pairs(session).items() for a in metals]
    tables = session.tables
    fractions = session.fractions
    ov = [("base", None, [tables[i % len(tables)]] if i % 2 else None, ["all", "total", "dissolved"][i % 3],
           f"{2010 + i % 10}-01-01", f"{2011 + i % 10 + i % 6}-06-30", None) for i in range(n_calls)]
    charts = [("base", *pairs[(i * 7) % len(pairs)], "all" if i % 5 == 0 else fractions[i % len(fractions)], "linear")
              for i in range(n_calls)]
    grid = []
    for i in range(n_calls):
        model = {"ratio": {"filterType": "number", "type": "greaterThan", "filter": 1 + i % 7 / 2, "filterTo": None}}
        if i % 3 == 0:
            model["site_id"] = {"filterType": "text", "type": "contains", "filter": f"S0{i % 10}"}
        sort = [{"colId": ["ratio", "sampled_at", "site_id"][i % 3], "sort": "desc" if i % 2 else "asc"}]
        grid.append(({"startRow": 0, "endRow": 25, "filterModel": model, "sortModel": sort}, "base"))
    return {"pairs": pairs, "overview": ov, "charts": charts, "grid": grid}


def time_callbacks(path: Path, n_calls: int = 50) -> dict:
    """Build the app in this process and time its callbacks called directly."""
    from dashboard.app import create_app
    from tracescreen.io.loading import LoadOptions

    t0 = time.perf_counter()
    app = create_app([path], _limits(), options=LoadOptions(default_fraction="total"))
    build_s = time.perf_counter() - t0
    print(f"  ... app built in {build_s:.1f} s, process memory {_peak_mb(os.getpid(), 'VmRSS'):.0f} MB "
          f"(peak {_peak_mb(os.getpid()):.0f} MB), load {_load()}", flush=True)
    from dashboard.state.store import current_session

    out = {"build_s": build_s}
    with app.server.test_request_context():
        session = current_session(None)
        t = time.perf_counter()
        while not (session.ready("trends") and session.ready("retest")):
            time.sleep(0.5)
        out["background_s"] = time.perf_counter() - t0
        print(f"  trend table and retest list ready {out['background_s']:.0f} s after the start "
              f"(worker thread; {time.perf_counter() - t:.0f} s after the app was built), load {_load()}", flush=True)
        inp = _inputs(session, n_calls)
        out.update(n_results=int(session.rid.max()) + 1, n_rows=len(session.screened), n_series=len(inp["pairs"]))
        overview, chart = _fn("overview", "update_overview"), _fn("site", "update_site_chart")
        trend, map_ = _fn("site", "update_site_trend"), _fn("map", "update_map")
        exc, tr, rq = (_fn(p, "serve_grid_rows") for p in ("exceedances", "trends", "retest"))
        latest = [(*a, "latest") for a in inp["overview"]]
        shown = [({"key": "base", "site": s, "analyte": a, "fraction": f},) for _, s, a, f, _ in inp["charts"]]
        rq_inputs = [(r, k, "2026-01-01") for r, k in inp["grid"]]
        rq_inputs = [({**r, "filterModel": {}, "sortModel": [{"colId": "site_id", "sort": "asc"}] if i % 2 else []},
                      k, d) for i, (r, k, d) in enumerate(rq_inputs)]
        tr_inputs = [({**r, "filterModel": {"p_value": {"filterType": "number", "type": "lessThan",
                                                        "filter": 0.01 * (1 + i), "filterTo": None}}}, k)
                     for i, (r, k) in enumerate(inp["grid"])]
        for name, fn, args in (
            ("overview (worst)", overview, inp["overview"]), ("overview (latest campaign)", overview, latest),
            ("map", map_, [a[:7] for a in inp["overview"]]), ("site chart", chart, inp["charts"]),
            ("trend after its chart", trend, shown), ("exceedance grid rows", exc, inp["grid"]),
            ("trends grid rows", tr, tr_inputs), ("retest request rows", rq, rq_inputs),
        ):
            for phase in ("cold", "warm"):
                _report(f"{name} {phase}", _timed(fn, args), out)
        # paging on through a filtered, sorted exceedance table: the query's positions are kept
        pages = [({**inp["grid"][1][0], "startRow": 25 * i, "endRow": 25 * (i + 1)}, "base") for i in range(n_calls)]
        _report("exceedance grid next pages", _timed(exc, pages), out)
        big = max(inp["pairs"], key=lambda p: len(session.series(p[0], p[1], "total")))
        t = time.perf_counter()
        fig = chart("base", big[0], big[1], "total", "log")[0]
        out["largest series"] = (big, len(session.series(big[0], big[1], "total")),
                                 (time.perf_counter() - t) * 1000, fig["data"][0]["type"])
    return out


#: a grid row with its data (the infinite row model first draws rows "loading" until the server answers)
ROW = ".ag-row:not(.ag-row-loading)"
#: each page and what shows that it is drawn
PAGES = (
    ("overview", "/", "#matrix-table"),
    ("map", "/map", "#map-graph .js-plotly-plot .main-svg"),
    ("site & metal", "/site", "#site-chart .js-plotly-plot .scatterlayer .trace, #site-chart .gl-container"),
    ("trends", "/trends", f"#tr-grid {ROW}"),
    ("exceedances", "/exceedances", f"#exc-grid {ROW}"),
    ("retest request", "/retest", f"#rq-grid {ROW}"),
    ("data quality", "/quality", "#dq-files-table"),
    ("limit tables", "/limits", ".limit-table"),
    ("upload", "/upload", ".dropzone"),
)


def browser_render(path: Path) -> dict:
    """Start ``python -m dashboard`` on the file, time every page's first draw in Chromium, read peak memory."""
    from playwright.sync_api import sync_playwright

    port = _free_port()
    cmd = [sys.executable, "-m", "dashboard", "--results", str(path), "--default-fraction", "total",
           "--port", str(port)]
    for lim in _limits():
        cmd += ["--limits", lim]
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT), str(ROOT / "src")]))
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    url = f"http://127.0.0.1:{port}"
    try:
        while True:
            if proc.poll() is not None:
                raise RuntimeError("dashboard exited: " + proc.stderr.read().decode()[-2000:])
            try:
                urllib.request.urlopen(url + "/", timeout=2).read()
                break
            except OSError:
                time.sleep(0.5)
        out = {"start_s": time.perf_counter() - t0}
        print(f"  ready after {out['start_s']:.1f} s, resident {_peak_mb(proc.pid, 'VmRSS'):.0f} MB "
              f"(peak {_peak_mb(proc.pid):.0f} MB), load {_load()}", flush=True)
        with sync_playwright() as p:
            b = p.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
            ctx = b.new_context(viewport={"width": 1400, "height": 1000})
            page = ctx.new_page()
            t = time.perf_counter()
            page.goto(url + "/")
            page.locator("#matrix-table").wait_for(state="visible", timeout=120_000)
            print(f"  overview, first visit (nothing cached) {time.perf_counter() - t:5.2f} s, load {_load()}", flush=True)
            for warm in ("/site", "/exceedances"):  # plotly.js and the grid's script into the cache
                page.goto(url + warm)
                page.wait_for_timeout(2000)
            page.goto(url + "/trends")  # wait for the worker thread's retest list and trend table (in that order)
            page.locator(f"#tr-grid {ROW}").first.wait_for(state="visible", timeout=600_000)
            out["background_s"] = time.perf_counter() - t0
            print(f"  trend table ready {out['background_s']:.0f} s after the start, load {_load()}", flush=True)
            for label, page_path, selector in PAGES:
                page = ctx.new_page()
                t = time.perf_counter()
                page.goto(url + page_path)
                page.locator(selector).first.wait_for(state="visible", timeout=120_000)
                out[label] = time.perf_counter() - t
                page.close()
                flag = "ok" if out[label] <= GOAL_DRAW_S else "ABOVE GOAL"
                print(f"  first draw {label:<16} {out[label]:5.2f} s  [{flag}: goal {GOAL_DRAW_S} s], "
                      f"load {_load()}", flush=True)
            b.close()
        out["peak_mb"] = _peak_mb(proc.pid)
    finally:
        proc.terminate()
        proc.wait(10)
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1_000_000)
    ap.add_argument("--calls", type=int, default=50)
    ap.add_argument("--no-browser", action="store_true", help="only the in-process callback figures")
    ap.add_argument("--browser-only", action="store_true", help="only the dashboard process figures")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory(prefix="tracescreen-bench-") as tmp:
        path = Path(tmp) / "results.csv"
        make_file(path, args.n)
        t = time.perf_counter()
        pd.read_csv(path)
        read_s = time.perf_counter() - t
        print(f"{args.n:,} generated results; reference pandas.read_csv: {read_s:.2f} s", flush=True)
        if not args.browser_only:
            print("\nIn-process app (callbacks called directly):", flush=True)
            cb = time_callbacks(path, args.calls)
            print(f"  load + screen + index {cb['build_s']:.1f} s ({cb['build_s'] / read_s:.1f}x the bare read); "
                  f"{cb['n_results']:,} results, {cb['n_rows']:,} screening rows, {cb['n_series']} site x metal "
                  f"series; peak memory of this process {_peak_mb(os.getpid()):.0f} MB", flush=True)
            (site, metal), n_rows, ms, kind = cb["largest series"]
            print(f"  largest series {site}/{metal}: {n_rows:,} screening rows, chart callback {ms:.0f} ms, "
                  f"trace {kind}", flush=True)
        if not args.no_browser:
            print("\nDashboard process (python -m dashboard):", flush=True)
            br = browser_render(path)
            flag = "ok" if br["peak_mb"] <= 1536 else "ABOVE GOAL"
            print(f"  peak resident memory {br['peak_mb']:.0f} MB   [{flag}: goal 1.5 GB], load {_load()}", flush=True)


if __name__ == "__main__":
    main()
