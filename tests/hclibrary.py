"""Loading libholdcount.so into a reference check through ctypes
(check_measures.py, check_horizon.py).

A sanitizer build of the library (test.sh's second stage) can be loaded
into Python only with the AddressSanitizer runtime first in the process:
load() re-runs the calling script with that runtime preloaded (leak
detection off: the interpreter's own allocations are not the library's),
then returns the library.  Environment: HOLDCOUNT_LIBRARY.
"""
import ctypes
import datetime
import os
import subprocess
import sys


def asan_runtime(lib):
    """The AddressSanitizer runtime the library links, from ldd; None for
    a plain build."""
    out = subprocess.run(["ldd", lib], capture_output=True, text=True).stdout
    for line in out.splitlines():
        parts = line.split()
        if parts and parts[0].startswith("libasan.so") and len(parts) >= 3 and parts[1] == "=>":
            return parts[2]
    return None


def load():
    path = os.environ["HOLDCOUNT_LIBRARY"]
    asan = asan_runtime(path)
    if asan and asan not in os.environ.get("LD_PRELOAD", ""):
        env = dict(os.environ)
        env["LD_PRELOAD"] = asan + (" " + env["LD_PRELOAD"] if env.get("LD_PRELOAD") else "")
        env["ASAN_OPTIONS"] = (env.get("ASAN_OPTIONS", "") + ":detect_leaks=0").lstrip(":")
        os.execve(sys.executable, [sys.executable] + sys.argv, env)
    return ctypes.CDLL(path)


def month_ends(year, n):
    """n month-end dates (ISO) from January of year, as the tests' invented
    monthly histories are dated."""
    out, y, m = [], year, 1
    for _ in range(n):
        nxt = datetime.date(y + (m == 12), m % 12 + 1, 1)
        out.append((nxt - datetime.timedelta(days=1)).isoformat())
        y, m = nxt.year, nxt.month
    return out
