"""Run a list of RunSpecs on local processes: this one and jobs - 1 workers, each storing its
own finished runs; and copies of one long task (tuning workers) on local processes."""

from __future__ import annotations

import contextlib
import multiprocessing
from collections.abc import Callable, Iterator
from typing import Any

import torch

from harness.execution.executed import Executed
from harness.execution.pool import Workers, available_cores, start_workers, worker_setup
from harness.execution.runs import (
    failure_line,
    no_space_line,
    out_of_space,
    pending,
    run_and_store,
)
from harness.execution.sharing import share_with_workers
from harness.models import load_builders
from harness.planning import RunSpec
from harness.planning.run_choices import COMPILE_MIN_EDGES
from harness.storage import store

# a graph this large gives a lone last run every core (docs/large-graphs.md, threads per run)
LARGE_GRAPH_EDGES = COMPILE_MIN_EDGES

WORKER_MODULES = (__name__,)  # what a worker loads before its first run
load_builders()  # the model layers too, so that forked workers inherit them


def last_run_threads(spec: RunSpec, jobs: int, threads: int) -> int:
    """Torch threads of a run that trains alone, with no other run left to start.

    On a large graph (declared directed edges >= LARGE_GRAPH_EDGES) it gets every core the
    command was given, jobs x threads within the usable cores, since the other processes would
    sit idle; on a small graph more threads gain little, so it keeps `threads`.
    """
    edges = spec.data.declared_edges()
    if jobs > 1 and edges is not None and edges >= LARGE_GRAPH_EDGES:
        return max(threads, min(jobs * threads, available_cores()))
    return threads


@contextlib.contextmanager
def torch_threads(count: int) -> Iterator[None]:
    """This process trains on `count` torch threads inside the block."""
    before = torch.get_num_threads()
    torch.set_num_threads(count)
    try:
        yield
    finally:
        torch.set_num_threads(before)


def _run_alone(
    todo: list[RunSpec],
    store_path: store.Store,
    jobs: int,
    threads: int,
    on_finished: Callable[[str], None] | None,
) -> tuple[bool, list[str]]:
    """Every run in this process, one after another: (cut off by Ctrl-C, lines of runs that
    raised)."""
    raised = []
    torch.set_num_threads(threads)
    try:
        for index, spec in enumerate(todo):  # with jobs > 1, a single run left
            with torch_threads(last_run_threads(spec, jobs, threads)):
                try:
                    contender = run_and_store(spec, store_path)
                except Exception as error:
                    raised.append(failure_line(spec, error))
                    if out_of_space(error):
                        raised.append(no_space_line(len(todo) - index - 1))
                        break
                    continue
            if on_finished:
                on_finished(contender)
    except KeyboardInterrupt:
        return True, raised
    return False, raised


def execute(
    specs: list[RunSpec],
    store_path: store.Store,
    jobs: int = 1,
    on_finished: Callable[[str], None] | None = None,
    workers: Workers | None = None,
    threads: int = 1,
) -> Executed:
    """Run every spec not yet stored, on `jobs` processes of `threads` torch threads each;
    Ctrl-C keeps what finished. A run that raises is reported and the others go on; one that
    raises InputError stops them all (what is stored stays).

    `workers`, if given, holds jobs - 1 processes from `start_workers` with the same `threads`
    and WORKER_MODULES, started early by the caller; execute owns them from here and shuts
    them down.
    """
    todo = pending(specs, store_path)
    lost = ()
    if jobs == 1 or len(todo) <= 1:
        if workers is not None:
            workers.terminate()
        interrupted, raised = _run_alone(todo, store_path, jobs, threads, on_finished)
    else:
        if workers is None:
            workers = start_workers(jobs - 1, threads, WORKER_MODULES)

        def threads_of(spec: RunSpec, alone: bool) -> contextlib.AbstractContextManager:
            return torch_threads(last_run_threads(spec, jobs, threads) if alone else threads)

        interrupted, sharing = share_with_workers(
            todo, store_path, on_finished, workers, threads, threads_of
        )
        raised, lost = sharing.raised, tuple(sharing.lost)
    # counted in the store: a run may be stored in the moment Ctrl-C or a kill arrives
    finished = len(todo) - len(pending(todo, store_path))
    failures = (*raised, *(run.message() for run in lost))
    return Executed(len(specs), len(specs) - len(todo), finished, interrupted, failures, lost)


def run_copies(task: Callable[..., Any], arguments: tuple, jobs: int, threads: int) -> list[Any]:
    """`task(*arguments)` once in each of `jobs` local processes of `threads` torch threads
    (in this process when jobs is 1); their results, in order."""
    if jobs == 1:
        torch.set_num_threads(threads)
        return [task(*arguments)]
    context = multiprocessing.get_context("spawn")
    preload = (task.__module__,)
    pool = context.Pool(jobs, initializer=worker_setup, initargs=(threads, preload))
    try:
        pending_results = [pool.apply_async(task, arguments) for _ in range(jobs)]
        results = [result.get() for result in pending_results]
        pool.close()
    except BaseException:
        pool.terminate()
        raise
    finally:
        pool.join()
    return results
