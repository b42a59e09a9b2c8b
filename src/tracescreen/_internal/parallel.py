"""Running a step over blocks on worker threads, in order, with a bounded number of blocks in memory.

numpy and Arrow release Python's interpreter lock inside their large operations, so blocks of a
big job (CSV blocks, bootstrap chunks) can run on all cores from threads. :func:`ordered_map`
takes its inputs lazily, in order, in the calling thread (so a seeded random generator draws the
same numbers however many cores there are), and hands back results in input order, holding at
most ``max_workers + 1`` blocks at a time.
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
