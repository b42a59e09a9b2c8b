"""The package's public face: a flat, lazily imported API and a command line that starts without the heavy libraries.

Source of the rules: DEVELOPERS.md ("Architecture": tracescreen/__init__.py re-exports every stage's
public functions, imported on first use; the CLI parser imports no pandas). Measured: `tracescreen
--help` starts in about 0.05 s this way (about 0.6 s with the heavy imports); that figure lives in the
closing note, not in a timed test.
"""

from __future__ import annotations

import importlib
import subprocess
import sys

import tracescreen

HEAVY = ("pandas", "numpy", "scipy", "pyarrow", "plotly", "dash", "pint", "openpyxl", "yaml")


def _imported_by(code: str) -> set[str]:
    """Heavy libraries a fresh interpreter has imported after running ``code``."""
    probe = f"{code}\nimport sys\nprint(','.join(m for m in {HEAVY!r} if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True).stdout
    return {m for m in out.strip().split(",") if m}


def test_building_the_cli_parser_imports_no_heavy_library():
    assert _imported_by("from tracescreen.cli import build_parser; build_parser()") == set()


def test_help_of_every_command_imports_no_heavy_library():
    from tracescreen.cli import COMMANDS

    names = [c.rstrip("_") for c in COMMANDS]
    code = ("from tracescreen.cli import build_parser\nimport contextlib, io\np = build_parser()\n"
            f"for n in {names!r}:\n    with contextlib.redirect_stdout(io.StringIO()), contextlib.suppress(SystemExit):\n"
            "        p.parse_args([n, '--help'])")
    assert _imported_by(code) == set()


def test_import_tracescreen_is_light_and_every_public_name_resolves():
    assert _imported_by("import tracescreen") == set()
    for name in tracescreen.__all__:
        if name == "__version__":
            continue
        value = getattr(tracescreen, name)
        assert value is getattr(importlib.import_module(tracescreen._EXPORTS[name]), name), name
    assert set(tracescreen.__all__) <= set(dir(tracescreen))


def test_an_unknown_name_is_an_attribute_error():
    try:
        tracescreen.no_such_function  # noqa: B018
    except AttributeError as exc:
        assert "no_such_function" in str(exc)
    else:
        raise AssertionError("expected AttributeError")
