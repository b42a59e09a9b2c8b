"""Giving freed memory back to the operating system after a large step.

Screening a million results allocates and frees many arrays of tens of megabytes. The C allocator
(glibc) and Arrow's allocator keep freed memory for reuse, so without this a process's resident
size after loading stays near its peak while the next step allocates more on top. After each large
step (loading, screening) the engine calls :func:`release_unused`: Arrow's pool releases unused
memory and, where the C library is glibc, ``malloc_trim(0)`` returns free heap pages.

References
----------
[glibc-malloc]_ (docs/references.md)
"""

from __future__ import annotations

import ctypes
import ctypes.util
import functools

import pyarrow as pa


@functools.lru_cache(maxsize=1)
def _malloc_trim():
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        return libc.malloc_trim  # glibc only; elsewhere AttributeError
    except (OSError, AttributeError):
        return None


def release_unused() -> None:
    """Return memory freed by earlier steps to the operating system (cheap; safe to call often)."""
    pa.default_memory_pool().release_unused()
    trim = _malloc_trim()
    if trim is not None:
        trim(0)
