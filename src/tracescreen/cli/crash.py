"""What the command line does when tracescreen itself fails (a bug, exit code 1).

The user sees two lines: what failed, and the request to report it with a log file; the traceback,
the command line, and the versions go into that file, not on the screen. ``TRACESCREEN_TRACEBACK=1``
also prints the traceback (for developers).

The log file is ``$XDG_STATE_HOME/tracescreen/`` (``~/.local/state/tracescreen/``), or the system's
temporary folder when that cannot be written.
"""

from __future__ import annotations

import datetime as dt
import os
import sys
import tempfile
import traceback
from pathlib import Path

#: Where bug reports are asked for.
REPORT_TO = "the tracescreen maintainers (the project's issue tracker)"


def log_folder() -> Path:
    """The folder crash logs are written to (``$XDG_STATE_HOME/tracescreen``)."""
    base = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(base) / "tracescreen"


def write_log(exc: BaseException, argv: list[str]) -> Path | None:
    """Write the traceback, the command line and the versions; the log's path (None if none could be written)."""
    from tracescreen.cli.version import version_text

    stamp = dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    text = (f"tracescreen crash log, {dt.datetime.now().isoformat(timespec='seconds')}\n"
            f"command line: tracescreen {' '.join(argv)}\nworking folder: {os.getcwd()}\n\n"
            + "".join(traceback.format_exception(exc)) + "\n")
    try:
        text += version_text() + "\n"
    except Exception:  # noqa: BLE001 (the log is written whatever the version report does)
        pass
    for folder in (log_folder(), Path(tempfile.gettempdir())):
        try:
            folder.mkdir(parents=True, exist_ok=True)
            path = folder / f"tracescreen-crash-{stamp}-{os.getpid()}.log"
            path.write_text(text, encoding="utf-8")
            return path
        except OSError:
            continue
    return None


def report_bug(exc: BaseException, argv: list[str], stream=None) -> int:
    """Tell the user tracescreen failed, where the details are and whom to tell; returns exit code 1."""
    stream = stream or sys.stderr
    path = write_log(exc, argv)
    first = (str(exc).strip().splitlines() or [""])[0]
    print(f"tracescreen: internal error: {type(exc).__name__}{': ' + first if first else ''}", file=stream)
    where = f"the log file {path}" if path else "the command line you ran (no log file could be written)"
    print(f"This is a bug in tracescreen, not a problem with your files. Please report it to {REPORT_TO} "
          f"with {where}; it holds the details.", file=stream)
    if os.environ.get("TRACESCREEN_TRACEBACK"):
        traceback.print_exception(exc, file=stream)
    return 1
