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


def peak_memory_mb() -> float:
    """This process's own peak resident memory [MB]: ``VmHWM`` of ``/proc/self/status`` on Linux.

    ``getrusage(RUSAGE_SELF).ru_maxrss`` is not this process's own: Linux carries it over fork and exec,
    so a worker or child started by a process holding 7 GB reports at least 7 GB. Elsewhere (no
    ``/proc``) ``ru_maxrss`` is what there is (kB on Linux and BSD, bytes on macOS).
    """
    try:
        with open("/proc/self/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    import resource
    import sys

    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak / 2**20 if sys.platform == "darwin" else peak / 1024
