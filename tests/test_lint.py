"""The code passes the project's linter configuration ([tool.ruff] in pyproject.toml: pyflakes, import
order, docstrings on public functions, McCabe complexity <= 15). Run here too, so that landing with the
test suite alone cannot skip it (common practice: lint in the test run)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_ruff_check_passes():
    proc = subprocess.run([sys.executable, "-m", "ruff", "check", "--output-format", "concise", "."],
                          cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stdout[-3000:] + proc.stderr[-1000:]
