"""Run a list of RunSpecs on local worker processes; each worker stores its own finished runs."""

from __future__ import annotations

import contextlib
import multiprocessing
import multiprocessing.pool
import threading
import time
from collections import deque
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any

import torch

from harness.execution.pool import available_cores, start_workers
from harness.models import load_builders
from harness.planning import COMPILE_MIN_EDGES, RunSpec, declared_edges
from harness.storage import store
from harness.storage.predictions import encode, to_text
from harness.training.fit import RunResult, as_trained
from harness.training.tasks import perform

# a graph this large gives a lone last run every core (README, Processes and threads)
LARGE_GRAPH_EDGES = COMPILE_MIN_EDGES

WORKER_MODULES = (__name__,)  # what a worker loads before its first run
load_builders()  # the model layers too, so that forked workers inherit them


@dataclass(frozen=True)
class Outcome:
    """What an execution did."""

    planned: int
    skipped: int
    finished: int
    interrupted: bool
    failures: tuple[str, ...] = ()  # one line per run that could not finish, naming its spec


def record_of(spec: RunSpec, result: RunResult) -> dict[str, Any]:
    """The store row of a finished run, keyed by the compile mode it actually used; its test
    predictions travel as text, when made."""
    spec = as_trained(spec, result)
    record = {
        "suite": spec.suite,
        "contender": spec.contender,
        "key": spec.key,
        "model": spec.model,
        "options": spec.options.model_dump(mode="json"),
        "point": spec.point,
        "seed": spec.seed,
        "metric": spec.metric,
        "val_metric": result.val_metric,
        "test_metric": result.test_metric,
        **{f"test_{name}": result.test_scores.get(name) for name in store.TEST_METRICS},
        "epochs": result.epochs,
        "best_epoch": result.best_epoch,
        "seconds": result.seconds,
        "seconds_per_epoch": result.seconds_per_epoch,
        "params": result.params,
        "peak_mb": result.peak_mb,
        "curve": result.curve,
        "extras": result.extras,
    }
    if result.predictions is not None:
        record["predictions"] = to_text(encode(result.predictions))
    return record


def run_and_store(spec: RunSpec, store_path: store.Store) -> str:
    """One run, committed to the store as soon as it ends."""
    store.save_run(store_path, record_of(spec, perform(spec)))
    return spec.contender


def last_run_threads(spec: RunSpec, jobs: int, threads: int) -> int:
    """Torch threads of a run that trains alone, with no other run left to start.

    On a large graph (declared directed edges >= LARGE_GRAPH_EDGES) it gets every core the
    command was given, jobs x threads within the usable cores, since the other processes would
    sit idle; on a small graph more threads gain little, so it keeps `threads`.
    """
    edges = declared_edges(spec.data)
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


def _worker_task(args: tuple[RunSpec, store.Store]) -> str:
    return run_and_store(*args)


def pending(specs: list[RunSpec], store_path: store.Store) -> list[RunSpec]:
    """Specs whose result is not stored yet (for their suite and contender).

    A compiled spec counts as stored when its eager twin is: a compile that failed once on this
    machine is not retried on every invocation, and eager and compiled runs compute the same
    thing (they differ in speed and in the last float bits).
    """
    suites = {spec.suite for spec in specs}
    done = set()
    for suite in suites:
        done |= {(suite, c, k) for c, k in store.finished_keys(store_path, suite)}
    return [s for s in specs if not any((s.suite, s.contender, k) in done for k in s.stored_keys)]


def _all_ready(results: list[multiprocessing.pool.AsyncResult]) -> bool:
    """A callback submits the next run before its own result turns ready: recount afterwards."""
    seen = list(results)
    return all(result.ready() for result in seen) and len(results) == len(seen)


def _share_with_workers(
    todo: list[RunSpec],
    store_path: store.Store,
    jobs: int,
    on_finished: Callable[[str], None] | None,
    pool: multiprocessing.pool.Pool,
    threads: int,
) -> tuple[int, bool]:
    """This process trains too, beside jobs - 1 workers, all taking runs from one queue.

    A spawned worker spends seconds importing torch and PyG before its first run; this process
    has them loaded already and trains meanwhile instead of waiting.
    """
    queue = deque(todo)
    lock = threading.Lock()
    finished = 0
    failures: list[BaseException] = []
    pending_results: list[multiprocessing.pool.AsyncResult] = []

    def count(contender: str) -> None:
        nonlocal finished
        with lock:
            finished += 1
        if on_finished:
            on_finished(contender)

    def take() -> RunSpec | None:
        with lock:
            return queue.popleft() if queue and not failures else None

    def submit(_: object = None) -> None:
        spec = take()
        if spec is not None:
            pending_results.append(
                pool.apply_async(
                    _worker_task,
                    ((spec, store_path),),
                    callback=lambda contender: (count(contender), submit()),
                    error_callback=failures.append,
                )
            )

    torch.set_num_threads(threads)
    try:
        for _ in range(jobs - 1):
            submit()
        while (spec := take()) is not None:
            alone = not queue and _all_ready(pending_results)
            with torch_threads(last_run_threads(spec, jobs, threads) if alone else threads):
                count(run_and_store(spec, store_path))
        while not _all_ready(pending_results):
            time.sleep(0.02)
        if failures:
            raise failures[0]
        pool.close()
    except KeyboardInterrupt:
        pool.terminate()
        return finished, True
    except BaseException:
        pool.terminate()
        raise
    finally:
        pool.join()
    return finished, False


def execute(
    specs: list[RunSpec],
    store_path: store.Store,
    jobs: int = 1,
    on_finished: Callable[[str], None] | None = None,
    workers: multiprocessing.pool.Pool | None = None,
    threads: int = 1,
) -> Outcome:
    """Run every spec not yet stored, on `jobs` processes of `threads` torch threads each;
    Ctrl-C keeps what finished.

    `workers`, if given, is a pool of jobs - 1 processes from `start_workers` with the same
    `threads` and WORKER_MODULES, started early by the caller; execute owns it from here and
    shuts it down.
    """
    todo = pending(specs, store_path)
    finished = 0
    interrupted = False
    if jobs == 1 or len(todo) <= 1:
        if workers is not None:
            workers.terminate()
            workers.join()
        torch.set_num_threads(threads)
        try:
            for spec in todo:  # with jobs > 1, a single run left
                with torch_threads(last_run_threads(spec, jobs, threads)):
                    on = run_and_store(spec, store_path)
                finished += 1
                if on_finished:
                    on_finished(on)
        except KeyboardInterrupt:
            interrupted = True
    else:
        if workers is None:
            workers = start_workers(jobs - 1, threads, WORKER_MODULES)
        finished, interrupted = _share_with_workers(
            todo, store_path, jobs, on_finished, workers, threads
        )
    return Outcome(len(specs), len(specs) - len(todo), finished, interrupted)
