"""What a Dask worker process is given before it trains, on any cluster: the allocator
thresholds of glibc that Dask's nanny fixed, put back to where training is fast.

A nanny starts its worker with MALLOC_TRIM_THRESHOLD_=65536 (Dask's `distributed.nanny.
pre-spawn-environ`, so that freed memory returns to the system). Any such variable turns off
glibc's dynamic mmap threshold (mallopt(3)): every buffer of 128 KiB or more is then mapped
and unmapped again, and a run touches its tensors' pages afresh each step. Measured on the
ablation suite (benchmarks/cluster.py, docs/performance.md): 18x the page faults and 1.5x the
CPU time of the same runs in a process without it.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import functools
import os

FIXED_BY = ("MALLOC_TRIM_THRESHOLD_", "MALLOC_MMAP_THRESHOLD_", "MALLOC_TOP_PAD_")
# mallopt(3) parameters, and the largest mmap threshold glibc's dynamic rule would reach on
# 64-bit (DEFAULT_MMAP_THRESHOLD_MAX), with its trim threshold at twice that, as the rule sets
M_TRIM_THRESHOLD, M_MMAP_THRESHOLD = -1, -3
MMAP_THRESHOLD = 32 * 1024 * 1024


@functools.cache
def allocator_fitted() -> bool:
    """Once per process: when an environment variable fixed glibc's thresholds, set the ones
    its dynamic rule reaches while training; True when it did. Elsewhere (no such variable,
    or no glibc) nothing changes."""
    if not any(name in os.environ for name in FIXED_BY):
        return False
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c"))
        mallopt = libc.mallopt
    except (OSError, AttributeError, TypeError):  # not glibc: no such thresholds
        return False
    return bool(
        mallopt(M_MMAP_THRESHOLD, MMAP_THRESHOLD) and mallopt(M_TRIM_THRESHOLD, 2 * MMAP_THRESHOLD)
    )
