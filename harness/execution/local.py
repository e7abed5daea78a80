"""Run a list of RunSpecs on local worker processes; each worker stores its own finished runs."""

from __future__ import annotations

import contextlib
import signal
import threading
from collections import Counter, deque
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from multiprocessing.connection import wait
from typing import Any

import torch

from harness.execution.pool import Worker, Workers, available_cores, start_workers
from harness.models import load_builders
from harness.planning import RunSpec
from harness.planning.run_choices import COMPILE_MIN_EDGES, declared_edges
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
    lost: tuple[LostRun, ...] = ()  # of those, the runs that ended their worker twice


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
    if result.predictions is not None and spec.keep_predictions:
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


@dataclass(frozen=True)
class LostRun:
    """A run whose worker process died under it twice: not stored, reported instead."""

    suite: str
    label: str
    seed: int
    key: str
    exit_code: int | None

    def message(self) -> str:
        how = "SIGKILL" if self.exit_code == -signal.SIGKILL else f"exit code {self.exit_code}"
        return (
            f"{self.suite}: run {self.label} seed {self.seed} (key {self.key}) ended its worker "
            f"process twice ({how}); likely cause: memory (the kernel's out-of-memory killer "
            "sends SIGKILL); lower the suite's sizes or run fewer jobs"
        )


class _Sharing:
    """Runs shared between this process and its workers; a dead worker's run is rerun once.

    A thread sends runs to idle workers and watches each busy worker's pipe and process: a reply
    is a finished run, a process that ends without one died under its run.
    """

    def __init__(
        self,
        todo: list[RunSpec],
        store_path: store.Store,
        workers: Workers,
        on_finished: Callable[[str], None] | None,
    ) -> None:
        self.queue = deque(todo)
        self.retry: deque[RunSpec] = deque()  # workers only: a second death spares this process
        self.store_path = store_path
        self.workers = workers
        self.lock = threading.Lock()
        self.stop = threading.Event()
        self.deaths: Counter[str] = Counter()
        self.lost: list[LostRun] = []
        self.failures: list[BaseException] = []
        self.on_finished = on_finished or (lambda _: None)

    def take(self, for_worker: bool) -> RunSpec | None:
        with self.lock:
            if self.failures or self.stop.is_set():
                return None
            if for_worker and self.retry:
                return self.retry.popleft()
            return self.queue.popleft() if self.queue else None

    def alone(self) -> bool:
        """No run left to start and no worker busy: this process's run trains alone."""
        with self.lock:
            waiting = self.queue or self.retry
        return not waiting and all(w.task is None for w in self.workers.members)

    def feed(self, worker: Worker) -> None:
        spec = self.take(for_worker=True)
        if spec is None:
            return
        try:
            worker.send(run_and_store, (spec, self.store_path), spec)
        except OSError:  # the worker died while idle: nothing of this run happened yet
            worker.task = None
            self.retry.appendleft(spec)
            self.workers.replace(worker)

    def died(self, worker: Worker) -> None:
        spec, worker.task = worker.task, None
        dead = worker.process
        self.workers.replace(worker)
        if not pending([spec], self.store_path):  # killed after its run was stored
            self.on_finished(spec.contender)
            return
        self.deaths[spec.key] += 1
        if self.deaths[spec.key] == 1:
            self.retry.append(spec)
        else:
            lost = LostRun(spec.suite, spec.label, spec.seed, spec.key, dead.exitcode)
            self.lost.append(lost)

    def heard(self, worker: Worker) -> None:
        try:
            status, value = worker.connection.recv()
        except (EOFError, OSError):
            self.died(worker)
            return
        worker.task = None
        if status == "done":
            self.on_finished(value)
        else:
            with self.lock:
                self.failures.append(value)

    def dispatch(self) -> None:
        """Until no worker is busy and none has work left (or the sharing stops)."""
        while not self.stop.is_set():
            for worker in list(self.workers.members):
                if worker.task is None:
                    self.feed(worker)
            busy = [w for w in self.workers.members if w.task is not None]
            if not busy:
                return
            ready = wait([w.connection for w in busy] + [w.process.sentinel for w in busy], 0.2)
            for worker in busy:
                if worker.connection in ready:
                    self.heard(worker)
                elif worker.process.sentinel in ready:
                    self.died(worker)


def _share_with_workers(
    todo: list[RunSpec],
    store_path: store.Store,
    jobs: int,
    on_finished: Callable[[str], None] | None,
    workers: Workers,
    threads: int,
) -> tuple[bool, list[LostRun]]:
    """This process trains too, beside its jobs - 1 workers, all taking runs from one queue.

    A spawned worker spends seconds importing torch and PyG before its first run; this process
    has them loaded already and trains meanwhile instead of waiting.
    """
    sharing = _Sharing(todo, store_path, workers, on_finished)
    for worker in workers.members:  # workers first: a rerun never lands in this process
        sharing.feed(worker)
    thread = threading.Thread(target=sharing.dispatch, name="heedful-dispatch", daemon=True)
    thread.start()

    torch.set_num_threads(threads)
    try:
        while (spec := sharing.take(for_worker=False)) is not None:
            alone = sharing.alone()
            with torch_threads(last_run_threads(spec, jobs, threads) if alone else threads):
                sharing.on_finished(run_and_store(spec, store_path))
        while thread.is_alive():
            thread.join(0.05)  # short waits: Ctrl-C is only seen between them
        if sharing.failures:
            raise sharing.failures[0]
        workers.close()
    except BaseException as error:
        sharing.stop.set()
        thread.join()
        workers.terminate()
        if isinstance(error, KeyboardInterrupt):
            return True, sharing.lost
        raise
    return False, sharing.lost


def execute(
    specs: list[RunSpec],
    store_path: store.Store,
    jobs: int = 1,
    on_finished: Callable[[str], None] | None = None,
    workers: Workers | None = None,
    threads: int = 1,
) -> Outcome:
    """Run every spec not yet stored, on `jobs` processes of `threads` torch threads each;
    Ctrl-C keeps what finished.

    `workers`, if given, holds jobs - 1 processes from `start_workers` with the same `threads`
    and WORKER_MODULES, started early by the caller; execute owns them from here and shuts
    them down.
    """
    todo = pending(specs, store_path)
    interrupted = False
    lost: list[LostRun] = []
    if jobs == 1 or len(todo) <= 1:
        if workers is not None:
            workers.terminate()
        torch.set_num_threads(threads)
        try:
            for spec in todo:  # with jobs > 1, a single run left
                with torch_threads(last_run_threads(spec, jobs, threads)):
                    contender = run_and_store(spec, store_path)
                if on_finished:
                    on_finished(contender)
        except KeyboardInterrupt:
            interrupted = True
    else:
        if workers is None:
            workers = start_workers(jobs - 1, threads, WORKER_MODULES)
        interrupted, lost = _share_with_workers(
            todo, store_path, jobs, on_finished, workers, threads
        )
    # counted in the store: a run may be stored in the moment Ctrl-C or a kill arrives
    finished = len(todo) - len(pending(todo, store_path))
    failures = tuple(run.message() for run in lost)
    return Outcome(len(specs), len(specs) - len(todo), finished, interrupted, failures, tuple(lost))
