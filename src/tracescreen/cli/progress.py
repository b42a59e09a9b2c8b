"""Progress of a command on stderr: one line per stage (what, how far, time taken, time left), drawn
with ``rich`` from the steps the pipeline reports (:mod:`tracescreen.progress`).

Shown only when stderr is a terminal and ``--quiet`` is not given, and only once the command has run
for :data:`DELAY` seconds, so quick runs, pipes, logs and CI output stay as they were. When it was
shown, one line at the end says how long each stage took. Every command gets it from
:func:`tracescreen.cli.main`; a command needs nothing but the engine's reports.

``TRACESCREEN_PROGRESS_DELAY`` (seconds) changes the delay (the tests set 0).
"""

from __future__ import annotations

import os
import sys
import time
from contextlib import contextmanager
from typing import Iterator

from tracescreen.progress import Step

#: Seconds a command runs before its progress is shown.
DELAY = 2.0


def _delay() -> float:
    try:
        return max(0.0, float(os.environ.get("TRACESCREEN_PROGRESS_DELAY", DELAY)))
    except ValueError:
        return DELAY


def _seconds(s: float) -> str:
    return f"{s:.1f} s" if s < 60 else f"{int(s // 60)} min {int(s % 60):02d} s"


class TerminalProgress:
    """A :data:`tracescreen.progress.Callback` that draws the stages on a terminal (stderr).

    The ``rich`` display starts at the first step (a command that reports none, like ``dashboard``
    before it hands over to the server, draws nothing) and is drawn once :data:`DELAY` seconds have
    passed since the command started.
    """

    def __init__(self, command: str, stream=None, delay: float | None = None):
        self.command = command
        self.stream = stream or sys.stderr
        self.delay = _delay() if delay is None else delay
        self.started = time.monotonic()
        self._display = None
        self._tasks: dict[str, int] = {}
        self._times: dict[str, list[float]] = {}  # stage -> [first step, last step]
        self._shown = False

    def __call__(self, step: Step) -> None:
        """Show one step (the first step starts the display)."""
        if self._display is None:
            self._start()
        now = time.monotonic()
        for other, task in self._tasks.items():  # a new stage ends the one before
            if other != step.stage and not self._display.tasks[task].finished:
                self._finish(other)
        times = self._times.setdefault(step.stage, [now, now])
        times[1] = now
        task = self._tasks.get(step.stage)
        if task is None:
            task = self._tasks[step.stage] = self._display.add_task(step.label, total=step.total, unit=step.unit,
                                                                   detail=step.detail)
        fields = {"unit": step.unit, "detail": step.detail}
        if step.done is None:
            self._display.update(task, advance=1, **fields)
        else:
            self._display.update(task, completed=step.done, total=step.total, **fields)
        if step.finished:
            self._finish(step.stage)

    def _finish(self, stage: str) -> None:
        task = self._display.tasks[self._tasks[stage]]
        total = task.total if task.total is not None else task.completed
        self._display.update(task.id, total=total, completed=max(total, task.completed), detail="")
        self._times[stage][1] = time.monotonic()

    def _start(self) -> None:
        from rich.console import Console
        from rich.progress import Progress

        owner = self

        class _Delayed(Progress):
            def get_renderables(self):
                if time.monotonic() - owner.started >= owner.delay:
                    owner._shown = True
                    yield self.make_tasks_table(self.tasks)

        console = Console(file=self.stream, stderr=self.stream is sys.stderr)
        self._display = _Delayed(
            *_columns(), console=console, transient=True, refresh_per_second=8,
            redirect_stdout=sys.stdout.isatty(), redirect_stderr=True)
        self._display.start()

    def close(self) -> None:
        """Stop the display; when it was shown, print one line with the time of each stage."""
        if self._display is None:
            return
        for stage, task in self._tasks.items():
            if not self._display.tasks[task].finished:
                self._finish(stage)
        self._display.refresh()
        self._display.stop()
        if self._shown:
            took = ", ".join(f"{self._display.tasks[t].description} {_seconds(b - a)}"
                             for s, t in self._tasks.items() for a, b in [self._times[s]])
            print(f"tracescreen {self.command}: done in {_seconds(time.monotonic() - self.started)} ({took})",
                  file=self.stream, flush=True)


def _count_text(task) -> str:
    unit = task.fields.get("unit", "")
    if task.total is None:
        return f"{task.completed:,.0f} {unit}"
    return f"{task.completed:,.0f}/{task.total:,.0f} {unit}"


def _columns() -> tuple:
    """The display's columns: spinner, stage, bar, units done, time taken, time left, detail."""
    from rich.progress import BarColumn, ProgressColumn, SpinnerColumn, TextColumn, TimeElapsedColumn
    from rich.text import Text

    class Count(ProgressColumn):
        def render(self, task):
            return Text(_count_text(task), style="progress.download")

    class Left(ProgressColumn):
        max_refresh = 0.5

        def render(self, task):
            left = task.time_remaining
            if task.finished or task.total is None or left is None:
                return Text("")
            return Text(f"about {_seconds(left)} left", style="progress.remaining")

    return (SpinnerColumn(finished_text="[green]done[/]"), TextColumn("{task.description:<26}"),
            BarColumn(bar_width=24), Count(), TimeElapsedColumn(), Left(), TextColumn("[dim]{task.fields[detail]}"))


def wanted(args) -> bool:
    """Whether to show progress: stderr is a terminal and ``--quiet`` is not given."""
    if getattr(args, "quiet", False):
        return False
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):
        return False


@contextmanager
def shown(args, command: str) -> Iterator[TerminalProgress | None]:
    """The progress display of one command (None when not :func:`wanted`); stopped on the way out."""
    if not wanted(args):
        yield None
        return
    display = TerminalProgress(command)
    try:
        yield display
    finally:
        display.close()
