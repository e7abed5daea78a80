"""Local worker processes, and how many torch threads each may use. Kept free of heavy imports
so that the run command can start spawned workers before its own imports."""

from __future__ import annotations

import gc
import importlib
import multiprocessing
import multiprocessing.pool
import os
import signal
import sys
import threading

from harness.errors import InputError


def available_cores() -> int:
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1


def check_threads(jobs: int, threads: int) -> None:
    """Jobs and torch threads per job are allowed only while jobs x threads <= cores: more
    processes than cores only compete for them (and each holds its own copy of torch)."""
    cores = available_cores()
    if jobs > cores:
        raise InputError(
            f"--jobs: {jobs} jobs need {jobs} cores, {cores} are usable; allowed: jobs <= {cores}"
        )
    if threads > 1 and jobs * threads > cores:
        raise InputError(
            f"--threads: {jobs} jobs x {threads} threads need {jobs * threads} cores, "
            f"{cores} are usable; allowed: jobs x threads <= {cores}"
        )


def start_method(threads: int) -> str:
    """'fork' for one-thread workers on Linux, else 'spawn'.

    A forked worker inherits the loaded torch and PyG at once; a spawned one imports them again
    (about 4 s, and about 1 s more for both when two processes import at the same time). GNU
    OpenMP is not fork-safe once a parallel region has run, but a one-thread worker never
    enters one; with more threads, workers are spawned.
    """
    return "fork" if threads == 1 and sys.platform.startswith("linux") else "spawn"


def worker_setup(threads: int, preload: tuple[str, ...] = ()) -> None:
    """Runs once in each worker: Ctrl-C is the parent's, threads are capped, and the modules
    the caller names (PyG and the run code) are loaded before the first run arrives."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    import torch

    torch.set_num_threads(threads)
    for module in preload:
        importlib.import_module(module)

    # the imported modules live as long as the worker: kept out of every later collection,
    # which also spares a spawned worker about a second of teardown when the pool closes
    gc.freeze()


def start_workers(
    count: int, threads: int, preload: tuple[str, ...] = ()
) -> multiprocessing.pool.Pool:
    """A pool of `count` workers, `threads` torch threads each (see start_method), each with
    the `preload` modules imported."""
    context = multiprocessing.get_context(start_method(threads))
    # workers start with Ctrl-C ignored (inherited, and kept across exec), so none prints a
    # traceback while still starting; this process alone decides what Ctrl-C does
    main_thread = threading.current_thread() is threading.main_thread()
    default = signal.signal(signal.SIGINT, signal.SIG_IGN) if main_thread else None
    try:
        return context.Pool(count, initializer=worker_setup, initargs=(threads, preload))
    finally:
        if main_thread:
            signal.signal(signal.SIGINT, default)
