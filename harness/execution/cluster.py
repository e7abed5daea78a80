"""Run a list of RunSpecs as tasks on a Dask cluster (Dask's `distributed` scheduler).

Workers only train: each finished run comes back to this process, which stores it the moment
it arrives, so the store has one writer and workers need no access to it. A worker that dies
mid-run has its run given to another worker by the scheduler, at most `allowed-failures` times
(Dask's setting; RESUBMISSIONS for `local:N` clusters); a run that raises is reported once,
and one that raises InputError stops them all, as on local processes.
"""

from __future__ import annotations

import functools
import hashlib
import logging
import uuid
from collections.abc import Callable, Iterator
from contextlib import contextmanager, suppress
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import dask
import torch
from distributed import Client, LocalCluster, as_completed, get_worker
from distributed.scheduler import KilledWorker
from distributed.utils import CancelledError
from pydantic import BaseModel

import harness
from harness.data import load_graph
from harness.errors import InputError
from harness.execution.executed import Executed
from harness.execution.reaching import (
    CONNECT_SECONDS,
    TRIALS_KEPT,
    quiet_dask_logs,
    scheduler_lost,
)
from harness.execution.runs import (
    describe,
    failure_line,
    no_space_line,
    out_of_space,
    pending,
    record_of,
)
from harness.execution.shipping import Shipment, content_of, ship, unpack
from harness.execution.worker_process import allocator_fitted
from harness.planning import RunSpec
from harness.results import RunResult
from harness.storage import store
from harness.training.runs import perform

RESUBMISSIONS = 3  # Dask's own default for allowed-failures, stated for local clusters too
WORKER_WAIT_SECONDS = 60


@functools.lru_cache(maxsize=1)
def source_hash() -> str:
    """SHA-256 over the installed package's Python sources (paths and contents)."""
    root = Path(harness.__file__).parent
    digest = hashlib.sha256()
    for path in sorted(root.rglob("*.py")):
        digest.update(path.relative_to(root).as_posix().encode() + b"\0")
        digest.update(path.read_bytes() + b"\0")
    return digest.hexdigest()[:16]


def fingerprint() -> dict[str, str]:
    """What must match between the submitter and every worker for results to be comparable."""
    import torch_geometric

    return {
        "Heedful source hash": source_hash(),
        "torch": torch.__version__,
        "PyG": torch_geometric.__version__,
    }


def local_fingerprint() -> dict[str, str]:
    return fingerprint()


def difference(worker: str, theirs: dict[str, str]) -> str | None:
    """One line naming the first difference between a worker and this process, if any."""
    ours = local_fingerprint()
    for name, value in ours.items():
        if theirs.get(name) != value:
            return (
                f"worker {worker} has {name} {theirs.get(name)}, this machine {value}; "
                "allowed: workers with the same Heedful source, torch and PyG as the submitter"
            )
    return None


def _local_cluster(workers: int) -> LocalCluster:
    # worker-saturation 1: a worker holds only the run it trains, so its death counts against
    # that run alone (Dask counts every run a dead worker held towards allowed-failures)
    settings = {"allowed-failures": RESUBMISSIONS, "worker-saturation": 1.0}
    settings = {f"distributed.scheduler.{k}": v for k, v in settings.items()}
    # the worker's profiler samples every thread's stack each 10 ms: CPU time runs do not get
    settings["distributed.worker.profile.enabled"] = False
    with dask.config.set(settings):
        return LocalCluster(
            n_workers=workers,
            threads_per_worker=1,
            processes=True,
            dashboard_address=None,
            # its scheduler still serves a few HTTP routes, on 8787 unless told: another
            # cluster of this machine holding that port would make Dask print a warning
            scheduler_kwargs={"dashboard_address": ":0"},
            silence_logs=logging.ERROR,
        )


@dataclass(frozen=True)
class Cluster:
    """A connected Dask client and the address it was given (for messages)."""

    client: Client
    address: str

    @property
    def shares_files(self) -> bool:
        """Whether its workers are processes of this machine, started here (`local:N`): they
        share its folders, so they cache where this process does."""
        return self.address.startswith("local:")


@contextmanager
def connected(address: str) -> Iterator[Cluster]:
    """A client of the scheduler at `address` (see connect_client), with Dask's logs quiet."""
    with quiet_dask_logs(), connect_client(address) as cluster:
        yield cluster


@contextmanager
def connect_client(address: str) -> Iterator[Cluster]:
    """A client of the scheduler at `address` (or of a throw-away `local:N` cluster) whose
    workers match this machine; errors name the address and come before anything runs."""
    local = _local_cluster(int(address.split(":", 1)[1])) if address.startswith("local:") else None
    try:
        client = Client(local or address, timeout=f"{CONNECT_SECONDS}s")
    except Exception as error:  # refused, timed out, or something else answering there
        reason = " ".join(str(error).split()) or type(error).__name__
        raise InputError(
            f"--cluster {address}: no Dask scheduler answered ({reason}); allowed: the address "
            "of a running scheduler, such as tcp://10.0.0.5:8786, or local:N"
        ) from None
    try:
        try:
            client.wait_for_workers(1, timeout=WORKER_WAIT_SECONDS)
        except TimeoutError:
            raise InputError(
                f"--cluster {address}: no worker joined the scheduler within "
                f"{WORKER_WAIT_SECONDS} s; allowed: a scheduler with workers (dask worker ADDRESS)"
            ) from None
        for worker, theirs in client.run(fingerprint).items():
            if (line := difference(worker, theirs)) is not None:
                raise InputError(f"--cluster {address}: {line}")
        yield Cluster(client, address)
    finally:
        with suppress(Exception):
            client.close(timeout=5)
        if local is not None:
            with suppress(Exception):
                local.close(timeout=5)


def train_on_worker(
    spec: RunSpec, threads: int, graph: object, own_cache: bool
) -> tuple[RunResult, str, dict[str, str]]:
    """One run on a worker, on the graph the submitter sent for its (pinned) data section: its
    result, and the worker with its fingerprint (a worker that joined after the first check is
    checked when its result arrives)."""
    allocator_fitted()
    torch.set_num_threads(threads)
    folder = unpack([spec.data], [graph], own_cache)
    on_worker = spec if folder is None else replace(spec, hop_cache=folder)  # not in the key
    return perform(on_worker), get_worker().address, fingerprint()


def cluster_failure_line(spec: RunSpec, error: BaseException) -> str:
    """The line of a run that did not come back; InputError raises again (see failure_line)."""
    if isinstance(error, KilledWorker):
        return (
            f"{describe(spec)}: its worker died {RESUBMISSIONS + 1} times (out of memory, or "
            "killed); everything else is stored"
        )
    return failure_line(spec, error)


def shipped_sections(client: Client, todo: list[RunSpec]) -> tuple[dict[str, Shipment], list[str]]:
    """Each distinct data section of the runs loaded here and sent to every worker; a section
    that cannot be loaded is one failure line per run of it (bad input stops them all, naming
    its first run), as when each run loaded it."""
    shipments: dict[str, Shipment] = {}
    errors: dict[str, Exception] = {}
    failures: list[str] = []
    for spec in todo:
        content = content_of(spec.data)
        if content not in shipments and content not in errors:
            try:
                graph = load_graph(spec.data)
            except Exception as error:
                errors[content] = error
            else:
                shipments[content] = ship(client, spec.data, graph)
        if content in errors:
            failures.append(failure_line(spec, errors[content]))
    return shipments, failures


def execute_on_cluster(
    specs: list[RunSpec],
    store_path: store.Store,
    cluster: Cluster,
    threads: int = 1,
    on_finished: Callable[[str], None] | None = None,
) -> Executed:
    """Submit every spec not yet stored; store each result as it arrives. Ctrl-C cancels what
    is still running and keeps what is stored."""
    todo = pending(specs, store_path)
    client = cluster.client
    shipments, failures = shipped_sections(client, todo)
    batch = uuid.uuid4().hex[:8]  # task keys of their own: another submitter's never merge
    futures = {}
    for index, spec in enumerate(todo):
        if (shipment := shipments.get(content_of(spec.data))) is None:
            continue  # its data could not be loaded: its line is in failures
        pinned = replace(spec, data=shipment.section)
        arguments = (pinned, threads, shipment.graph, not cluster.shares_files)
        task = f"heedful-{batch}-{index}"
        futures[client.submit(train_on_worker, *arguments, key=task, pure=False)] = pinned
    finished, interrupted = 0, False
    try:
        for future in as_completed(futures):
            spec = futures.pop(future)
            if future.status == "error":
                failures.append(cluster_failure_line(spec, future.exception()))
                continue
            try:
                result, worker, theirs = future.result()
            except (CancelledError, OSError):  # cancelled, or cut off, as the scheduler went
                if client.status == "running":
                    raise
                kept = f"{finished} runs finished and are stored, {len(futures) + 1} not"
                raise scheduler_lost(cluster.address, kept) from None
            if (line := difference(worker, theirs)) is not None:
                raise InputError(f"--cluster: {line}")
            try:
                store.save_run(store_path, record_of(spec, result))  # keyed here, as planned
            except Exception as error:
                if not out_of_space(error):
                    raise
                failures += [failure_line(spec, error), no_space_line(len(futures))]
                break  # the runs still out are cancelled below: they could not be stored
            finished += 1
            if on_finished:
                on_finished(spec.contender)
    except KeyboardInterrupt:
        interrupted = True
    finally:
        if futures:
            with suppress(Exception):
                client.cancel(list(futures))
    return Executed(len(specs), len(specs) - len(todo), finished, interrupted, tuple(failures))


def _copy_on_worker(
    task: Callable[..., Any],
    arguments: tuple,
    threads: int,
    sections: list[BaseModel],
    graphs: list[object],
    own_cache: bool,
) -> Any:
    allocator_fitted()
    torch.set_num_threads(threads)
    unpack(sections, graphs, own_cache)
    return task(*arguments)


def run_copies_on_cluster(
    task: Callable[..., Any],
    arguments: tuple,
    cluster: Cluster,
    threads: int = 1,
    data: tuple[BaseModel, ...] = (),
) -> list[Any]:
    """`task(*arguments)` once per worker of the cluster, on `threads` torch threads, with the
    graphs of the (pinned) data sections `data` sent from here; their results. Ctrl-C or an
    error cancels the copies still running."""
    client = cluster.client
    count = max(1, len(client.scheduler_info()["workers"]))
    shipments = [ship(client, section, load_graph(section)) for section in data]
    sections, graphs = [s.section for s in shipments], [s.graph for s in shipments]
    batch = uuid.uuid4().hex[:8]
    shipped = (threads, sections, graphs, not cluster.shares_files)
    futures = [
        client.submit(_copy_on_worker, task, arguments, *shipped, key=f"heedful-copy-{batch}-{n}")
        for n in range(count)
    ]
    try:
        return client.gather(futures)
    except CancelledError:  # by the client, when it lost the scheduler
        raise scheduler_lost(cluster.address, TRIALS_KEPT) from None
    except BaseException:
        client.cancel(futures)
        raise
