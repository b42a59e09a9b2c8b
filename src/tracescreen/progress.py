"""Progress of a long run: which stage it is in and how far that stage has got, for whoever shows it.

The pipeline's steps and the stages under them call :func:`report`; they never draw anything. A
caller that wants to see the progress passes a callback (``pipeline.run(..., progress=callback)``)
or wraps its work in ``with reporting(callback):``; every :class:`Step` then reaches the callback,
on the thread that runs the work. Without a callback :func:`report` does nothing (a few hundred
nanoseconds), so the stages can report freely.

Who shows it: the command line draws one line per stage on stderr (:mod:`tracescreen.cli.progress`),
and ``python -m dashboard`` shows the same stages while it builds its session.

Examples
--------
>>> from tracescreen.progress import Step, report, reporting, stage
>>> seen = []
>>> with reporting(seen.append):
...     report("read", 1, 2, unit="files", detail="a.csv")
...     with stage("retest"):
...         pass
>>> [(s.stage, s.done, s.total, s.finished) for s in seen]
[('read', 1, 2, False), ('retest', 0, None, False), ('retest', 1, 1, True)]
>>> report("screen", 10, 100)  # no callback: nothing happens
"""

from __future__ import annotations

from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass
from typing import Callable, Iterator

#: The stages of a run, in the order they happen, and their names in words.
STAGES = {
    "read": "reading files",
    "store": "storing in the workspace",
    "screen": "screening",
    "statistics": "statistics",
    "lab_qc": "laboratory QC review",
    "retest": "retest list",
    "wells": "wells against background",
    "report": "building the report",
    "write": "writing outputs",
}


@dataclass(frozen=True)
class Step:
    """How far one stage has got.

    Attributes
    ----------
    stage : str
        A key of :data:`STAGES` (other names are shown as given).
    done : int or None
        Units done so far in this stage; None: one more unit done (a count without a known total).
    total : int or None
        Units the stage will do; None when not known.
    unit : str
        What is counted: ``rows``, ``files``, ``tables``, ``steps``.
    detail : str
        What is being done now (a file name, a table name), or "".
    finished : bool
        True on the stage's last step.
    """

    stage: str
    done: int | None = 0
    total: int | None = None
    unit: str = "rows"
    detail: str = ""
    finished: bool = False

    @property
    def label(self) -> str:
        """The stage in words (:data:`STAGES`)."""
        return STAGES.get(self.stage, self.stage.replace("_", " "))


Callback = Callable[[Step], None]

_CURRENT: ContextVar[Callback | None] = ContextVar("tracescreen_progress", default=None)


@contextmanager
def reporting(callback: Callback | None) -> Iterator[None]:
    """Send every :func:`report` made inside the block (on this thread) to ``callback``.

    ``None`` keeps whatever callback an outer block set, so a function can always wrap its work in
    ``with reporting(progress):`` and pass on its own ``progress=None`` argument.
    """
    if callback is None:
        yield
        return
    token = _CURRENT.set(callback)
    try:
        yield
    finally:
        _CURRENT.reset(token)


@contextmanager
def shared_between_threads() -> Iterator[None]:
    """Inside the block, the current callback (if any) takes one step at a time, whichever thread reports:
    a thread started with the block's context (``contextvars.copy_context``) reports to it safely."""
    callback = _CURRENT.get()
    if callback is None:
        yield
        return
    import threading

    lock = threading.Lock()

    def locked(step: Step) -> None:
        with lock:
            callback(step)

    with reporting(locked):
        yield


def report(stage: str, done: int | None = 0, total: int | None = None, unit: str = "rows", detail: str = "",
           finished: bool = False) -> None:
    """Tell the current callback how far ``stage`` has got (nothing happens without one)."""
    callback = _CURRENT.get()
    if callback is not None:
        callback(Step(stage, done, total, unit, detail, finished))


def active() -> bool:
    """Whether a callback receives the reports (to skip work done only to describe progress)."""
    return _CURRENT.get() is not None


@contextmanager
def stage(name: str, detail: str = "") -> Iterator[None]:
    """A stage done in one go: reported when it starts and when it ends (as 1 of 1 step)."""
    report(name, 0, None, unit="steps", detail=detail)
    yield
    report(name, 1, 1, unit="steps", detail=detail, finished=True)
