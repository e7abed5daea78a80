"""Runs shared between this process and its local worker processes, one queue for all; a run
whose worker dies under it is rerun once, then reported."""

from __future__ import annotations

import threading
from collections import Counter, deque
from collections.abc import Callable
from contextlib import AbstractContextManager
from multiprocessing.connection import wait

import torch

from harness.errors import STOPPING
from harness.execution.executed import LostRun
from harness.execution.pool import Worker, Workers
from harness.execution.runs import (
    failure_line,
    no_space_line,
    out_of_space,
    pending,
    run_and_store,
)
from harness.planning import RunSpec
from harness.storage import store


class Sharing:
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
        self.raised: list[str] = []  # one line per run that raised (not bad input)
        self.failures: list[BaseException] = []  # what stops the sharing: bad input
        self.no_space = False  # a full disk: no run starts, the busy ones end as they do
        self.on_finished = on_finished or (lambda _: None)

    def take(self, for_worker: bool) -> RunSpec | None:
        with self.lock:
            if self.failures or self.no_space or self.stop.is_set():
                return None
            if for_worker and self.retry:
                return self.retry.popleft()
            return self.queue.popleft() if self.queue else None

    def alone(self) -> bool:
        """No run left to start and no worker busy: this process's run trains alone."""
        with self.lock:
            waiting = self.queue or self.retry
        return not waiting and all(w.task is None for w in self.workers.members)

    def raised_in(self, spec: RunSpec, error: BaseException) -> None:
        """A run raised: its line is kept and the rest go on; bad input stops every run."""
        with self.lock:
            try:
                self.raised.append(failure_line(spec, error))
            except STOPPING as stop:
                self.failures.append(stop)
            if out_of_space(error) and not self.no_space:
                self.no_space = True
                self.raised.append(no_space_line(len(self.queue) + len(self.retry)))

    def run_here(self, spec: RunSpec) -> None:
        try:
            self.on_finished(run_and_store(spec, self.store_path))
        except Exception as error:
            self.raised_in(spec, error)

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
        spec, worker.task = worker.task, None
        if status == "done":
            self.on_finished(value)
        else:
            self.raised_in(spec, value)

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


def share_with_workers(
    todo: list[RunSpec],
    store_path: store.Store,
    on_finished: Callable[[str], None] | None,
    workers: Workers,
    threads: int,
    threads_of: Callable[[RunSpec, bool], AbstractContextManager],
) -> tuple[bool, Sharing]:
    """This process trains too, beside its workers, all taking runs from one queue; a run it
    trains uses the torch threads `threads_of(spec, alone)` sets. True when cut off by Ctrl-C.

    A spawned worker spends seconds importing torch and PyG before its first run; this process
    has them loaded already and trains meanwhile instead of waiting.
    """
    sharing = Sharing(todo, store_path, workers, on_finished)
    for worker in workers.members:  # workers first: a rerun never lands in this process
        sharing.feed(worker)
    thread = threading.Thread(target=sharing.dispatch, name="heedful-dispatch", daemon=True)
    thread.start()

    torch.set_num_threads(threads)
    try:
        while (spec := sharing.take(for_worker=False)) is not None:
            with threads_of(spec, sharing.alone()):
                sharing.run_here(spec)
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
            return True, sharing
        raise
    return False, sharing
