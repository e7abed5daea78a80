"""Local worker processes. Kept free of heavy imports so that the run command can start its
workers first: their torch and PyG imports (seconds each) then overlap the parent's own."""

from __future__ import annotations

import gc
import multiprocessing
import multiprocessing.pool
import os
import signal
import threading

from harness.errors import InputError


def available_cores() -> int:
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1


def check_threads(jobs: int, threads: int) -> None:
    """More than one torch thread per process is allowed only while jobs x threads <= cores."""
    cores = available_cores()
    if threads > 1 and jobs * threads > cores:
        raise InputError(
            f"--threads: {jobs} jobs x {threads} threads need {jobs * threads} cores, "
            f"{cores} are usable; allowed: jobs x threads <= {cores}"
        )


def worker_setup(threads: int) -> None:
    """Runs once in each worker: Ctrl-C is the parent's, threads are capped, imports done now."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    import torch

    torch.set_num_threads(threads)
    import harness.execute  # noqa: F401  (loads PyG and the run code before the first run arrives)

    # the imported modules live as long as the worker: kept out of every later collection,
    # which also spares the worker about a second of teardown when the pool closes
    gc.freeze()


def start_workers(count: int, threads: int) -> multiprocessing.pool.Pool:
    """A spawned pool of `count` workers, `threads` torch threads each."""
    context = multiprocessing.get_context("spawn")
    # workers start with Ctrl-C ignored (kept across exec), so none prints a traceback while
    # still importing; this process alone decides what Ctrl-C does
    main_thread = threading.current_thread() is threading.main_thread()
    default = signal.signal(signal.SIGINT, signal.SIG_IGN) if main_thread else None
    try:
        return context.Pool(count, initializer=worker_setup, initargs=(threads,))
    finally:
        if main_thread:
            signal.signal(signal.SIGINT, default)
