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
