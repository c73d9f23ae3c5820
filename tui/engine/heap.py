"""Keep freed memory for reuse, so that large temporary arrays do not cost fresh pages.

A row-level fit on 100,000 rows makes arrays of 800 kB several times per Newton step.
glibc hands out every block above its mmap threshold (128 kB at first) as a fresh
mapping: the kernel zeroes and maps its pages one fault at a time, and the block goes
back to the kernel when freed (glibc raises the threshold by itself after a while, but
trims the heap's top again). On the 2-core development machine an adjusted scan spent
about a tenth of its CPU time in the kernel that way (benchmarks/results/adjusted_speed.md).
Raising the mmap threshold and the trim limit keeps such blocks on the heap for the
next step. Only glibc has ``mallopt``; on other systems this does nothing.
"""

from __future__ import annotations

import ctypes
import functools
import sys

_M_TRIM_THRESHOLD = -1
_M_MMAP_THRESHOLD = -3
MMAP_THRESHOLD = 32 * 2**20
"""Blocks below this come from the heap (32 MiB: the largest glibc accepts everywhere)."""
TRIM_THRESHOLD = 128 * 2**20
"""Free memory at the top of the heap kept for reuse before any is given back."""


@functools.cache
def reuse_freed_memory() -> bool:
    """Ask the C allocator to keep freed blocks for reuse (once per process; forked worker
    processes inherit it). True when the allocator took both settings."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):
        return False
    mallopt.argtypes = (ctypes.c_int, ctypes.c_int)
    mallopt.restype = ctypes.c_int
    took_mmap = mallopt(_M_MMAP_THRESHOLD, MMAP_THRESHOLD) == 1
    took_trim = mallopt(_M_TRIM_THRESHOLD, TRIM_THRESHOLD) == 1
    return took_mmap and took_trim
