"""Running a step over blocks on worker threads, in order, with a bounded number of blocks in memory.

numpy and Arrow release Python's interpreter lock inside their large operations, so blocks of a
big job (CSV blocks, bootstrap chunks) can run on all cores from threads. :func:`ordered_map`
takes its inputs lazily, in order, in the calling thread (so a seeded random generator draws the
same numbers however many cores there are), and hands back results in input order, holding at
most ``max_workers + 1`` blocks at a time. :class:`BackgroundWork` runs jobs one at a time on one
background thread while the caller prepares the next (a run in parts writes part k while it computes
part k + 1).
"""

from __future__ import annotations

import os
from collections import deque
from concurrent.futures import ThreadPoolExecutor
from typing import Callable, Iterable, Iterator


def workers(limit: int) -> int:
    """Threads to use: the machine's cores, at most ``limit``, at least 1."""
    return max(1, min(os.cpu_count() or 1, limit))


def ordered_map(fn: Callable, args: Iterable[tuple], max_workers: int) -> Iterator:
    """``fn(*a)`` for each ``a`` in ``args``, computed on threads, yielded in input order."""
    with ThreadPoolExecutor(max_workers) as pool:
        pending = deque()
        for a in args:
            pending.append(pool.submit(fn, *a))
            if len(pending) > max_workers:  # a bounded number of blocks in memory
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()


class BackgroundWork:
    """Jobs run in order on one background thread, at most one waiting, while the caller goes on.

    Used as a context manager. :meth:`submit` first waits for the previous job (so at most one job's
    inputs are held besides the caller's), then starts the new one in a copy of the caller's context
    (its :mod:`tracescreen.progress` callback, made safe for two threads for the block:
    :func:`tracescreen.progress.shared_between_threads`). A job's error is raised by the next
    :meth:`submit` or at the end of the block; when the block itself fails, the job under way is waited
    for (its own error dropped) before the block's error goes on, so the caller's clean-up runs after it.
    ``background`` False runs each job at once on the calling thread.
    """

    def __init__(self, background: bool = True):
        from tracescreen.progress import shared_between_threads

        self.pending = None
        self.pool = ThreadPoolExecutor(1, thread_name_prefix="tracescreen-background") if background else None
        self._shared = shared_between_threads() if background else None

    def __enter__(self) -> "BackgroundWork":
        if self._shared is not None:
            self._shared.__enter__()
        return self

    def submit(self, job: Callable[[], None]) -> None:
        """Run ``job()`` after the previous job, on the background thread (or now, without one)."""
        self.wait()
        if self.pool is None:
            job()
            return
        import contextvars

        self.pending = self.pool.submit(contextvars.copy_context().run, job)

    def wait(self) -> None:
        """Wait for the job under way; raise its error."""
        pending, self.pending = self.pending, None
        if pending is not None:
            pending.result()

    def __exit__(self, kind, error, trace) -> None:
        try:
            if kind is None:
                self.wait()
        finally:
            if self.pool is not None:
                self.pool.shutdown(wait=True)
            if self._shared is not None:
                self._shared.__exit__(kind, error, trace)
