"""peak_memory_mb: a process's own peak resident memory (Linux proc(5) VmHWM), not the peak it inherits."""

import json
import os
import subprocess
import sys

import pytest


@pytest.mark.skipif(not os.path.exists("/proc/self/status"), reason="VmHWM is Linux's /proc")
def test_peak_memory_is_the_process_own_not_its_parents():
    """A child started by a process holding 400 MB: its ru_maxrss carries the parent's peak over fork and
    exec (Linux keeps the signal struct's maxrss; proc(5), getrusage(2)); VmHWM is its own."""
    child = ("import json, resource; from tracescreen._internal.memory import peak_memory_mb; "
             "print(json.dumps([peak_memory_mb(), resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024]))")
    parent = ("import subprocess, sys; big = bytearray(400 * 2**20); big[::4096] = b'x' * len(big[::4096]); "
              f"sys.stdout.write(subprocess.run([sys.executable, '-c', {child!r}], capture_output=True, text=True).stdout)")
    out = subprocess.run([sys.executable, "-c", parent], capture_output=True, text=True, check=True).stdout
    own, maxrss = json.loads(out)
    assert maxrss >= 400 and own < 300, (own, maxrss)


_HEAP = """
import ctypes, json
from tracescreen._internal import memory
libc = ctypes.CDLL("libc.so.6"); libc.malloc.restype = ctypes.c_void_p; libc.malloc.argtypes = [ctypes.c_size_t]
libc.free.argtypes = [ctypes.c_void_p]
def rss():
    return next(int(ln.split()[1]) for ln in open("/proc/self/status") if ln.startswith("VmRSS")) / 1024
blocks = [libc.malloc(64 * 1024) for _ in range({mb} * 16)]  # below the mmap threshold: heap memory
for b in blocks:
    ctypes.memset(b, 1, 64 * 1024)
fence = libc.malloc(100 * 1024)  # from the top of the heap: keeps the freed blocks inside the heap (not its top, which glibc trims by itself)
for b in blocks:
    libc.free(b)
before = rss()
memory.release_unused()
print(json.dumps([before, rss(), memory.heap_free_bytes() / 2**20]))
"""


@pytest.mark.skipif(not os.path.exists("/proc/self/status"), reason="VmRSS is Linux's /proc")
@pytest.mark.parametrize("mb, released", [(64, False), (400, True)])
def test_release_unused_keeps_a_steps_free_memory_and_gives_back_more(mb, released):
    """glibc keeps freed heap memory for reuse; malloc_trim(0) gives its pages back (malloc_trim(3)).
    release_unused trims only when more than KEEP_FREE (256 MB) is free: 64 MB freed stays resident
    for the next step to reuse, 400 MB freed is given back."""
    from tracescreen._internal import memory

    if memory.heap_free_bytes() is None:
        pytest.skip("not glibc >= 2.33 (no mallinfo2)")
    out = subprocess.run([sys.executable, "-c", _HEAP.format(mb=mb)], capture_output=True, text=True, check=True).stdout
    before, after, free = json.loads(out)
    assert free >= 0.9 * mb  # the freed blocks are free heap memory
    if released:
        assert before - after > 0.9 * mb, (before, after)
    else:
        assert before - after < 0.1 * mb, (before, after)
