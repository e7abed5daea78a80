"""Local worker processes, and how many torch threads each may use. Kept free of heavy imports
so that the run command can start spawned workers before its own imports."""

from __future__ import annotations

import gc
import importlib
import multiprocessing
import multiprocessing.context
import os
import pickle
import signal
import sys
from collections.abc import Callable
from multiprocessing.connection import Connection
from typing import Any

from harness.errors import InputError


def available_cores() -> int:
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1


def check_threads(jobs: int, threads: int, option: str = "--jobs", noun: str = "jobs") -> None:
    """Processes (jobs, or the workers of a local cluster: `option` and `noun` name them) and
    torch threads per process are allowed only while processes x threads <= cores: more
    processes than cores only compete for them (and each holds its own copy of torch)."""
    cores = available_cores()
    if jobs > cores:
        raise InputError(
            f"{option}: {jobs} {noun} need {jobs} cores, {cores} are usable; "
            f"allowed: {noun} <= {cores}"
        )
    if threads > 1 and jobs * threads > cores:
        raise InputError(
            f"--threads: {jobs} {noun} x {threads} threads need {jobs * threads} cores, "
            f"{cores} are usable; allowed: {noun} x threads <= {cores}"
        )


def start_method(threads: int) -> str:
    """'fork' for one-thread workers on Linux, else 'spawn'.

    A forked worker inherits the loaded torch and PyG at once; a spawned one imports them again
    (about 4 s, and about 1 s more for both when two processes import at the same time). GNU
    OpenMP is not fork-safe once a parallel region has run, but a one-thread worker never
    enters one; with more threads, workers are spawned. Only the first workers start this way,
    before any other thread trains; a replacement for a dead worker is always spawned.
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


class Worker:
    """One worker process and this process's end of its pipe; `task` is what it runs now."""

    def __init__(
        self, context: multiprocessing.context.BaseContext, threads: int, preload: tuple[str, ...]
    ) -> None:
        self.connection, theirs = context.Pipe()
        arguments = (theirs, threads, preload)
        self.process = context.Process(target=_serve, args=arguments, daemon=True)
        self.process.start()
        theirs.close()
        self.task: Any = None

    def send(self, function: Callable[..., Any], arguments: tuple, task: Any) -> None:
        self.task = task
        self.connection.send((function, arguments))


class Workers:
    """Worker processes that each run one task at a time, sent to them by this process.

    Unlike a multiprocessing pool, the sender knows which task each worker holds, so a worker
    that dies (the kernel's out-of-memory killer sends SIGKILL) is noticed with its task.
    """

    def __init__(self, count: int, threads: int, preload: tuple[str, ...] = ()) -> None:
        self.threads, self.preload = threads, preload
        self.context = multiprocessing.get_context(start_method(threads))
        self.members = [self.start(self.context) for _ in range(count)]

    def start(self, context: multiprocessing.context.BaseContext) -> Worker:
        # Ctrl-C blocked in this thread while a worker starts: the worker inherits the mask
        # (kept across exec) and ignores Ctrl-C from its first instruction, so none prints a
        # traceback while still starting; this process alone decides what Ctrl-C does
        before = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
        try:
            return Worker(context, self.threads, self.preload)
        finally:
            signal.pthread_sigmask(signal.SIG_SETMASK, before)

    def replace(self, dead: Worker) -> Worker:
        """A spawned worker in place of a dead one.

        Never forked: a replacement starts while another thread of this process trains, and a
        fork copies the locks that thread holds at that instant, never to be released in the
        copy (a forked replacement hung in torch.manual_seed, on the random generator's lock).
        """
        dead.connection.close()
        dead.process.join()
        fresh = self.start(multiprocessing.get_context("spawn"))
        self.members[self.members.index(dead)] = fresh
        return fresh

    def close(self) -> None:
        """Ask every worker to stop after its task, and wait for them."""
        for worker in self.members:
            try:
                worker.connection.send(None)
            except OSError:
                pass  # already gone
        for worker in self.members:
            worker.process.join()
            worker.connection.close()

    def terminate(self) -> None:
        for worker in self.members:
            worker.process.kill()
        for worker in self.members:
            worker.process.join()
            worker.connection.close()


def _serve(connection: Connection, threads: int, preload: tuple[str, ...]) -> None:
    """A worker's life: set up, then run each task sent until told to stop."""
    worker_setup(threads, preload)
    while True:
        try:
            task = connection.recv()
        except EOFError:  # the sender is gone
            return
        if task is None:
            return
        function, arguments = task
        try:
            reply = ("done", function(*arguments))
        except Exception as error:  # the sender raises it, as a pool would
            reply = ("error", error)
        try:
            connection.send(reply)
        except (pickle.PicklingError, TypeError, AttributeError):
            connection.send(("error", RuntimeError(f"{type(reply[1]).__name__}: {reply[1]}")))


def start_workers(count: int, threads: int, preload: tuple[str, ...] = ()) -> Workers:
    """`count` workers, `threads` torch threads each (see start_method), each with the
    `preload` modules imported."""
    return Workers(count, threads, preload)
