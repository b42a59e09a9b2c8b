"""Outputs written whole or not at all, and a run manifest that says a run completed.

A command's outputs are first written under temporary names in the output folder
(``.screening.partial-<pid>.csv``); only when every output has been written are they renamed into
place, and the run manifest (:data:`MANIFEST`: the inputs' SHA-256, the options, each output's rows,
bytes and SHA-256, the completion time) is written last. So:

* a reader can tell a complete run from a partial one: the manifest exists and every output's
  SHA-256 matches it;
* a kill or a full disk while writing never leaves a truncated or plausible-looking output under
  its real name: the temporary files are removed (or, after a kill, by the next run), and the
  earlier run's outputs and manifest stay as they were;
* a failure says which outputs of an earlier run remain.

Renaming within one folder is atomic on POSIX file systems [POSIX-rename]_ (``os.replace``). Any
writer that takes a path (CSV, XLSX, HTML, Parquet) can be staged: :func:`write_atomic` for one
file, :class:`OutputFolder` for a run's folder.
"""

from __future__ import annotations

import contextlib
import json
import os
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Callable

from tracescreen._internal.hashing import file_sha256

#: The run manifest's file name in an output folder.
MANIFEST = "run_manifest.json"
PARTIAL = ".partial-"


class OutputError(ValueError):
    """Outputs that could not be written (the message names the file, the problem and what remains)."""


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


def _temporary(path: Path) -> Path:
    """``.name.partial-<pid>.suffix`` beside ``path`` (the suffix kept for writers that look at it)."""
    return path.with_name(f".{path.stem}{PARTIAL}{os.getpid()}{path.suffix}")


def _fsync_dir(folder: Path) -> None:
    with contextlib.suppress(OSError):  # not every file system lets a folder be opened
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _fsynced(path: Path) -> None:
    if path.is_file():
        with open(path, "rb") as f:
            os.fsync(f.fileno())


def write_atomic(path: str | Path, write: Callable[[Path], Any]) -> Path:
    """``write(temporary_path)``, then rename it to ``path``: the file is there whole or not at all.

    Raises :class:`OutputError` (the temporary file removed) when the writing fails for lack of
    space or permission.
    """
    path = Path(path)
    check_target(path.parent, file=path)
    tmp = _temporary(path)
    try:
        write(tmp)
        _fsynced(tmp)
        os.replace(tmp, path)
    except OSError as exc:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise OutputError(f"cannot write {path} ({exc.strerror or exc}); nothing was written there") from None
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    _fsync_dir(path.parent)
    return path


def check_target(folder: Path, file: Path | None = None) -> None:
    """OutputError unless ``folder`` is (or can be made) a writable folder, and ``file`` is not a folder."""
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: exists and is a file, not a folder; give a folder for the outputs")
    if file is not None and file.is_dir():
        raise OutputError(f"{file}: is a folder; give a file name")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot create the output folder ({exc.strerror or exc})") from None
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputError(f"{folder}: the output folder is not writable")


class OutputFolder:
    """The outputs of one run in one folder: staged, then renamed into place together, manifest last.

    Use as a context manager; on an exception the staged files are removed and an :class:`OutputError`
    (for a failed write) says which earlier outputs remain.

    Parameters
    ----------
    folder : path
        The output folder (created if needed; an existing file there is an error, at once).
    command : str
        The command that writes it (recorded in the manifest).
    options : dict, optional
        The run's options as given (recorded in the manifest).
    """

    def __init__(self, folder: str | Path, command: str, options: dict | None = None):
        self.folder = Path(folder)
        check_target(self.folder)
        for stale in self.folder.glob(f".*{PARTIAL}*"):  # left by a run that was killed
            with contextlib.suppress(OSError):
                stale.unlink()
        self.command, self.options = command, dict(options or {})
        self.started_at = _now()
        self.inputs: list[dict] = []
        self._staged: list[tuple[str, Path, Path, int | None]] = []  # name, final path, temporary, rows
        self._sha256: dict[str, str] = {}  # outputs hashed as they were written

    def __enter__(self) -> OutputFolder:
        return self

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc_type is not None:
            self.abort()
            if isinstance(exc, OSError) and not isinstance(exc, OutputError):
                where = getattr(exc, "filename", None) or "an output"
                raise OutputError(f"cannot write {where} ({exc.strerror or exc}); {self.remaining()}") from None
        return False

    def stage(self, name: str, filename: str, write: Callable[[Path], Any], rows: int | None = None) -> Path:
        """``write(temporary_path)`` for the output ``filename``; returns the path it will have."""
        final = self.folder / filename
        tmp = _temporary(final)
        try:
            write(tmp)
        except OSError as exc:
            raise OutputError(f"cannot write {final} ({exc.strerror or exc}); {self.remaining()}") from None
        self._staged.append((name, final, tmp, rows))
        return final

    def reserve(self, name: str, filename: str) -> Path:
        """The temporary path of output ``filename``, for a writer that fills it part by part (a table
        streamed as its parts come); staged with the rest, its rows given later by :meth:`set_rows`."""
        final = self.folder / filename
        tmp = _temporary(final)
        self._staged.append((name, final, tmp, None))
        return tmp

    def set_rows(self, name: str, rows: int, sha256: str | None = None) -> None:
        """The number of rows of staged output ``name`` (recorded in the manifest), and its SHA-256 when the
        writer hashed the bytes as it wrote them (the commit then does not read the file again)."""
        self._staged = [(n, f, t, rows if n == name else r) for n, f, t, r in self._staged]
        if sha256 is not None:
            self._sha256[name] = sha256

    def final_path(self, name: str) -> Path:
        """The path staged output ``name`` has (or will have once committed)."""
        return next(f for n, f, _, _ in self._staged if n == name)

    def csv(self, name: str, table, filename: str) -> Path:
        """Stage ``table`` as a CSV output (:func:`tracescreen.report.writers.write_csv`)."""
        from tracescreen.report.writers import write_csv

        return self.stage(name, filename, lambda p: write_csv(table, p), rows=len(table))

    def commit(self, inputs=None) -> Path:
        """Rename every staged output into place, then write the manifest; returns the manifest's path.

        ``inputs`` is a table with ``kind, file, path, sha256`` of every input (``pipeline.Results.input_files``).
        """
        for _, _, tmp, _ in self._staged:
            _fsynced(tmp)
        manifest = self.folder / MANIFEST
        with contextlib.suppress(FileNotFoundError):
            manifest.unlink()  # from here until the new manifest, the folder is marked incomplete
        _fsync_dir(self.folder)
        outputs = []
        for name, final, tmp, rows in self._staged:
            os.replace(tmp, final)
            outputs.append({"name": name, "file": final.name, "rows": rows, "bytes": final.stat().st_size,
                            "sha256": self._sha256.get(name) or file_sha256(final)})
        _fsync_dir(self.folder)
        record = {"tool": _tool(), "command": self.command, "started_at": self.started_at,
                  "completed_at": _now(), "complete": True, "options": self.options,
                  "inputs": _records(inputs), "outputs": outputs}
        return write_atomic(manifest, lambda p: p.write_text(json.dumps(record, indent=2, default=str),
                                                             encoding="utf-8"))

    def abort(self) -> None:
        """Remove the staged files (the earlier outputs stay as they were)."""
        for _, _, tmp, _ in self._staged:
            with contextlib.suppress(OSError):
                tmp.unlink()
        for stale in self.folder.glob(f".*{PARTIAL}{os.getpid()}*"):
            with contextlib.suppress(OSError):
                stale.unlink()
        self._staged.clear()

    def remaining(self) -> str:
        """Words on what the folder holds after a failed run."""
        manifest = self.folder / MANIFEST
        try:
            earlier = json.loads(manifest.read_text(encoding="utf-8"))
            files = ", ".join(o["file"] for o in earlier.get("outputs", []))
            return (f"no outputs were written; the earlier '{earlier.get('command')}' run's outputs of "
                    f"{earlier.get('completed_at')} remain in {self.folder} ({files})")
        except (OSError, ValueError, AttributeError):
            return f"no outputs were written to {self.folder}"


def _tool() -> str:
    from tracescreen import __version__

    return f"tracescreen {__version__}"


def _records(inputs) -> list[dict]:
    if inputs is None:
        return []
    cols = [c for c in ("kind", "file", "path", "sheet", "sha256") if c in inputs.columns]
    return inputs[cols].drop_duplicates().to_dict("records")


def read_manifest(folder: str | Path) -> dict | None:
    """The manifest of a complete run in ``folder`` whose outputs all match it; None otherwise."""
    folder = Path(folder)
    try:
        record = json.loads((folder / MANIFEST).read_text(encoding="utf-8"))
        ok = record.get("complete") and all(
            file_sha256(folder / o["file"]) == o["sha256"] for o in record.get("outputs", []))
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return None
    return record if ok else None
