"""Benchmark: hostile files against the reading caps (README "Caps on one input file"), each in a fresh child.

Issue 20: a 134 KB .xlsx upload drove the dashboard to 5.5 GB; a 68 KB file took the command line to 2.8 GB;
a 6 MB workbook expanding to 1.4 GB of XML was still being read after 5 minutes; a 200,000-column CSV
header took 117 s and 2.7 GB. Goal: each refused (exit 2, one line) or read within seconds and without
growing memory past what an ordinary small file costs.

Each case runs ``tracescreen screen`` in a fresh child process and reports file size, exit code, wall time
and peak resident memory (``ru_maxrss``); the reference in the same run is an ordinary 3-row workbook. The
Upload page's caps are given as the command-line options of the same values (``ReadCaps.upload()``).
The bombs are built by tests/workbook_bombs.py.

    flock /work/wt/bench.lock .venv/bin/python bench/bench_hostile_input.py
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "bench"))

from bench_long_series import run_screen_args  # noqa: E402
from workbook_bombs import HEADER, ROW, write_bomb  # noqa: E402

from tracescreen.io.caps import ReadCaps  # noqa: E402

UPLOAD = ReadCaps.upload()
UPLOAD_ARGS = ["--max-columns", str(UPLOAD.max_columns), "--max-workbook-mb", str(UPLOAD.workbook_mb),
               "--max-workbook-rows", str(UPLOAD.workbook_rows), "--max-workbook-cells", str(UPLOAD.workbook_cells)]


def main() -> int:
    ok = True
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        wide = tmp / "wide.csv"
        wide.write_text(",".join(HEADER) + "," + ",".join(f"c{i}" for i in range(200_000)) + "\n"
                        + (",".join(ROW) + "\n") * 10)
        cases = [
            ("reference: ordinary 3-row workbook", write_bomb(tmp / "ordinary.xlsx", "ordinary"), [], 0),
            ("dimension claims A1:XFD1048576", write_bomb(tmp / "claimed.xlsx", "claimed"), [], 0),
            ("one cell at XFD1048576", write_bomb(tmp / "far.xlsx", "far_cell"), [], 0),
            ("one cell at XFD1048576, Upload caps", tmp / "far.xlsx", UPLOAD_ARGS, 2),
            ("2,000,000 identical rows (deflate)", write_bomb(tmp / "deflate2m.xlsx", "deflate", 2_000_000), [], 2),
            ("600,000 identical rows, Upload caps", write_bomb(tmp / "deflate600k.xlsx", "deflate", 600_000),
             UPLOAD_ARGS, 2),
            ("CSV header of 200,000 columns", wide, [], 2),
        ]
        print(f"{'case':42s} {'file':>9s} {'exit':>4s} {'wall':>7s} {'peak RSS':>9s}")
        for label, path, extra, want in cases:
            wall, peak, rc, err = run_screen_args([str(path), *extra], tmp / "out")
            line = err.strip().splitlines()[-1][:110] if rc == 2 and err.strip() else ""
            print(f"{label:42s} {path.stat().st_size / 1024:7.0f} KB {rc:4d} {wall:6.1f} s {peak:6.0f} MB"
                  f"  (load average {os.getloadavg()[0]:.1f}) {line}", flush=True)
            ok &= rc == want and peak < 1024
        print("goal (refused or read, each within 1 GB):", "met" if ok else "MISSED")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
