"""Giving freed memory back to the operating system after a large step.

Screening a million results allocates and frees many arrays of tens of megabytes. The C allocator
(glibc) and Arrow's allocator keep freed memory for reuse. After each large step (loading,
screening, each statistic of a part) the engine calls :func:`release_unused`: Arrow's pool releases
its unused memory, and the C heap is trimmed (glibc ``malloc_trim(0)``) when it holds more than
:data:`KEEP_FREE` bytes free. Below that, the freed memory is what the next step of a part
allocates again: giving it back each time made every step fault its memory in again (the 1M
Parquet run: 0.85 million page faults against 0.3 million, seconds of system time), while the peak
stays where it is (the peak is inside a step, not between steps). A step that frees more than
that (the text of a large file once it is loaded) still gives it back.

References
----------
[glibc-malloc]_ (docs/references.md)
"""

from __future__ import annotations

import ctypes
import ctypes.util
import functools

import pyarrow as pa

#: Free memory [bytes] the C heap may keep for the next step to reuse; more is given back. Between
#: the steps of a part of ``PART_ROWS`` results the heap holds 50-250 MB free (measured on the 1M run).
KEEP_FREE = 256 * 2**20


class _MallInfo2(ctypes.Structure):
    """glibc's ``struct mallinfo2`` (mallinfo(3)): sizes in bytes."""

    _fields_ = [(name, ctypes.c_size_t) for name in
                ("arena", "ordblks", "smblks", "hblks", "hblkhd", "usmblks", "fsmblks", "uordblks", "fordblks",
                 "keepcost")]


@functools.lru_cache(maxsize=1)
def _glibc():
    """``(malloc_trim, mallinfo2)`` of the C library (mallinfo2 None before glibc 2.33), or None
    where the C library is not glibc."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        trim = libc.malloc_trim  # glibc only; elsewhere AttributeError
    except (OSError, AttributeError):
        return None
    info = getattr(libc, "mallinfo2", None)
    if info is not None:
        info.restype = _MallInfo2
    return trim, info


def heap_free_bytes() -> int | None:
    """Bytes the C heap holds free (glibc ``mallinfo2().fordblks``, all arenas); None where unknown."""
    lib = _glibc()
    if lib is None or lib[1] is None:
        return None
    return int(lib[1]().fordblks)


def release_unused(keep: int = KEEP_FREE) -> None:
    """Return memory freed by earlier steps to the operating system: Arrow's unused memory always,
    the C heap's free memory when it is more than ``keep`` bytes (cheap; safe to call often)."""
    pa.default_memory_pool().release_unused()
    lib = _glibc()
    if lib is None:
        return
    free = heap_free_bytes()
    if free is None or free > keep:
        lib[0](0)


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
