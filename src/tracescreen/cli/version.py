"""``tracescreen --version``: the version, what it runs on, and the limit tables shipped with it.

The library versions come from the installed packages' metadata (nothing heavy is imported); the
limit tables are the YAML files of ``limits/`` in the project folder, each with its id and name
(which states its edition or year) and the date it came into force where the table gives one.
"""

from __future__ import annotations

import argparse
import platform
import sys
from pathlib import Path

#: The limit tables shipped with tracescreen (``limits/`` of the project folder).
SHIPPED_LIMITS = Path(__file__).resolve().parents[3] / "limits"


def _version(package: str) -> str:
    from importlib import metadata  # (imported when --version asks: 25 ms of every run's start)

    try:
        return metadata.version(package)
    except metadata.PackageNotFoundError:
        return "not installed"


def shipped_tables(folder: Path = SHIPPED_LIMITS) -> list[tuple[str, str, str]]:
    """(path, id, name with edition and date in force) of every shipped limit table."""
    import yaml

    from tracescreen._internal.yamlfiles import SAFE_LOADER

    rows = []
    for path in sorted(folder.rglob("*.yaml")):
        try:
            data = yaml.load(path.read_text(encoding="utf-8"), Loader=SAFE_LOADER) or {}
        except (OSError, yaml.YAMLError) as exc:
            rows.append((str(path.relative_to(folder)), "?", f"not readable ({type(exc).__name__})"))
            continue
        name = str(data.get("name", ""))
        if data.get("effective_from") or data.get("effective_to"):
            name += f"; in force {data.get('effective_from') or '...'} to {data.get('effective_to') or 'now'}"
        rows.append((str(path.relative_to(folder)), str(data.get("id", path.stem)), name))
    return rows


def version_text() -> str:
    """Everything ``--version`` prints."""
    from tracescreen import __version__

    lines = [f"tracescreen {__version__}",
             f"Python {platform.python_version()} ({sys.executable}), pandas {_version('pandas')}, "
             f"Dash {_version('dash')}, plotly {_version('plotly')}, numpy {_version('numpy')}, "
             f"scipy {_version('scipy')}"]
    if SHIPPED_LIMITS.is_dir():
        lines.append(f"Limit tables shipped in {SHIPPED_LIMITS}:")
        lines += [f"  {path}\n      {name}" for path, _, name in shipped_tables()]
    else:
        lines.append("Limit tables: none shipped beside this installation (limits/ of the project folder)")
    return "\n".join(lines)


class VersionAction(argparse.Action):
    """``--version``: print :func:`version_text` (computed only when asked) and exit 0."""

    def __init__(self, option_strings, dest=argparse.SUPPRESS, default=argparse.SUPPRESS, help=None):
        super().__init__(option_strings, dest=dest, default=default, nargs=0, help=help)

    def __call__(self, parser, namespace, values, option_string=None):
        """Print the versions and the shipped limit tables, then exit."""
        print(version_text())
        parser.exit()
