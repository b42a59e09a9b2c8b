"""Benchmark: the dashboard with N results loaded (default 1,000,000).

Uses the lab file of ``bench_screen.py`` (same generator, same seed) and the shipped limit tables,
then measures, in the same run:

* server-side time of the overview callback, of the site-and-metal chart callback and of the
  trend callback that follows it, called directly (the functions behind ``@callback``) 50 times
  each: cold (50 different inputs, nothing cached), warm (the same inputs again, served from the
  per-session cache) and, for the trend, right after the chart of the same series as the browser
  calls it; median and p95;
* first page render in headless Chromium (Debian's /usr/bin/chromium): from navigation to the
  overview matrix drawn, against a dashboard started as ``python -m dashboard`` in its own process;
* that process's peak resident memory (VmHWM), after the render and some page views.

Reference in the same run: ``pandas.read_csv`` of the same file (the time to merely read it).
Goals: p95 <= 150 ms per callback, first render <= 3 s, dashboard process <= 1.5 GB.

    python bench/bench_dashboard.py [--n 1000000]
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


def time_callbacks(path: Path, n_calls: int = 50) -> dict:
    """Build the app in this process and time the two callbacks called directly."""
    from dashboard.app import create_app
    from tracescreen.io.loading import LoadOptions

    t0 = time.perf_counter()
    app = create_app([path], _limits(), options=LoadOptions(default_fraction="total"))
    build_s = time.perf_counter() - t0
    print(f"  ... app built in {build_s:.1f} s, process memory {_peak_mb(os.getpid(), 'VmRSS'):.0f} MB "
          f"(peak {_peak_mb(os.getpid()):.0f} MB), load {_load()}", flush=True)
    overview = sys.modules["pages.overview"].update_overview  # dash.callback returns the function itself
    chart = sys.modules["pages.site"].update_site_chart
    trend = sys.modules["pages.site"].update_site_trend
    from dashboard.state.store import current_session
    from dashboard.views.series import _pairs

    with app.server.test_request_context():
        session = current_session(None)
        pairs = [(s, a) for s, metals in _pairs(session).items() for a in metals]
        n_results = int(session.rid.max()) + 1
        n_rows = len(session.screened)
        tables = session.tables
        ov_inputs = []
        for i in range(n_calls):
            start = 2010 + i % 10
            ov_inputs.append((None, [tables[i % len(tables)]] if i % 2 else None, ["all", "total", "dissolved"][i % 3],
                              f"{start}-01-01", f"{start + 1 + i % 6}-06-30", None))
        ch_inputs = [(*pairs[(i * 7) % len(pairs)], "total", "linear") for i in range(n_calls)]
        ch_inputs = [(s, a, f if f in session.fractions else session.fractions[0], sc) for s, a, f, sc in ch_inputs]
        out = {"build_s": build_s, "n_results": n_results, "n_rows": n_rows, "n_series": len(pairs)}
        tr_inputs = [({"key": "base", "site": s, "analyte": a, "fraction": f},) for s, a, f, _ in ch_inputs]
        for name, fn, inputs in (("overview", overview, ov_inputs), ("site chart", chart, ch_inputs),
                                 ("trend", trend, tr_inputs)):
            for phase in ("cold", "warm"):
                ms = []
                for args in inputs:
                    t = time.perf_counter()
                    fn(*args) if name == "trend" else fn("base", *args)
                    ms.append((time.perf_counter() - t) * 1000)
                out[f"{name} {phase}"] = ms
                flag = "ok" if np.percentile(ms, 95) <= 150 else "ABOVE GOAL"
                print(f"  {name + ' ' + phase:<16} {_stats(ms)}   [{flag}: p95 goal 150 ms]   "
                      f"process memory {_peak_mb(os.getpid(), 'VmRSS'):.0f} MB, load {_load()}", flush=True)
        # as in the browser: the trend callback follows the chart callback of the same series
        # (it is triggered by the chart's output), on series not drawn before
        ms = []
        for i in range(n_calls):
            s, a = pairs[(i * 7 + 3) % len(pairs)]
            f = "total" if "total" in session.fractions else session.fractions[0]
            chart("base", s, a, f, "linear")
            t = time.perf_counter()
            trend({"key": "base", "site": s, "analyte": a, "fraction": f})
            ms.append((time.perf_counter() - t) * 1000)
        out["trend after chart"] = ms
        flag = "ok" if np.percentile(ms, 95) <= 150 else "ABOVE GOAL"
        print(f"  {'trend after its chart':<16} {_stats(ms)}   [{flag}: p95 goal 150 ms]   load {_load()}", flush=True)
        # the largest series, drawn with WebGL
        big = max(pairs, key=lambda p: len(session.series(p[0], p[1], "total")))
        t = time.perf_counter()
        fig, _, _ = chart("base", big[0], big[1], "total", "log")
        out["largest series"] = (big, len(session.series(big[0], big[1], "total")),
                                 (time.perf_counter() - t) * 1000, fig["data"][0]["type"])
    return out


def _peak_mb(pid: int, field: str = "VmHWM") -> float:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1]) / 1024
    return float("nan")


def browser_render(path: Path) -> dict:
    """Start ``python -m dashboard`` on the file, time first renders in Chromium, read peak memory."""
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
        start_s = time.perf_counter() - t0
        out = {"start_s": start_s}
        print(f"  ready after {start_s:.1f} s, resident {_peak_mb(proc.pid, 'VmRSS'):.0f} MB "
              f"(peak {_peak_mb(proc.pid):.0f} MB), load {_load()}", flush=True)
        with sync_playwright() as p:
            b = p.chromium.launch(executable_path="/usr/bin/chromium", headless=True, args=CHROME_FLAGS)
            for label, page_path, selector in (
                ("overview (first)", "/", "#matrix-table"),
                ("overview (again)", "/", "#matrix-table"),
                ("site & metal", "/site", "#site-chart .js-plotly-plot .scatterlayer, #site-chart .gl-container"),
                ("exceedances", "/exceedances", "#exc-table td"),
                ("map", "/map", "#map-graph .js-plotly-plot .main-svg"),
            ):
                ctx = b.new_context(viewport={"width": 1280, "height": 900})
                page = ctx.new_page()
                t = time.perf_counter()
                page.goto(url + page_path)
                page.locator(selector).first.wait_for(state="visible", timeout=120_000)
                out[label] = time.perf_counter() - t
                ctx.close()
                goal = ("  [goal 3 s: " + ("ok]" if out[label] <= 3 else "ABOVE GOAL]")
                        if label == "overview (first)" else "")
                print(f"  first render {label:<18} {out[label]:5.2f} s{goal}, load {_load()}", flush=True)
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
            report_callbacks(path, args.calls, read_s)
        if not args.no_browser:
            report_browser(path)


def report_callbacks(path: Path, calls: int, read_s: float) -> None:
    print("\nIn-process app (callbacks called directly):", flush=True)
    cb = time_callbacks(path, calls)
    print(f"  load + screen + index {cb['build_s']:.1f} s ({cb['build_s'] / read_s:.1f}x the bare read); "
          f"{cb['n_results']:,} results, {cb['n_rows']:,} screening rows, {cb['n_series']} site x metal "
          f"series; peak memory of this process {_peak_mb(os.getpid()):.0f} MB", flush=True)
    (site, metal), n_rows, ms, kind = cb["largest series"]
    print(f"  largest series {site}/{metal}: {n_rows:,} screening rows, chart callback {ms:.0f} ms, "
          f"trace {kind}", flush=True)


def report_browser(path: Path) -> None:
    print("\nDashboard process (python -m dashboard):", flush=True)
    br = browser_render(path)
    flag = "ok" if br["peak_mb"] <= 1536 else "ABOVE GOAL"
    print(f"  peak resident memory {br['peak_mb']:.0f} MB   [{flag}: goal 1.5 GB], load {_load()}", flush=True)


if __name__ == "__main__":
    main()
