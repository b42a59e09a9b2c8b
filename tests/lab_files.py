"""Helpers for tests that write small lab files."""

from __future__ import annotations

from pathlib import Path


def write_csv(tmp_path: Path, text: str, name: str = "lab.csv") -> Path:
    """Write ``text`` to ``tmp_path/name`` as UTF-8 and return the path."""
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p
