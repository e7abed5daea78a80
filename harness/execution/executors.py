"""The executor registry: where runs train, behind one narrow interface.

An executor runs specs into the store (`execute(specs, store_path, on_finished)`: every spec
not stored yet, each stored as it ends, a run that raises reported by one line naming it) and
runs copies of one long task, such as a tuning worker, one per worker (`run_copies(task,
arguments)`). `workers_store` says whether its workers may write the result store themselves;
if not, this process stores what they send back. A new executor is one module (its two
functions) and one entry in EXECUTORS.
"""

from __future__ import annotations

from collections.abc import Callable
from contextlib import ExitStack
from dataclasses import dataclass, field
from importlib import import_module
from typing import TYPE_CHECKING, Any

from harness.errors import InputError
from harness.execution.pool import Workers, check_threads

if TYPE_CHECKING:  # kept light: the run command starts spawned workers before heavy imports
    from harness.execution.runs import Outcome
    from harness.planning import RunSpec
    from harness.storage import store


@dataclass(frozen=True)
class Executor:
    """One executor, set up with what the command gave it; the commands use nothing else."""

    name: str
    where: str  # where the runs train, for messages
    workers_store: bool
    runs: Callable[..., Outcome]  # its module's function for specs, given the settings
    copies: Callable[..., list[Any]]  # and for copies of a task

    def execute(
        self,
        specs: list[RunSpec],
        store_path: store.Store,
        on_finished: Callable[[str], None] | None = None,
    ) -> Outcome:
        """Every spec not stored yet, trained and stored as each ends; a run that raises is
        one line naming it, a run that raises InputError stops them all."""
        return self.runs(specs, store_path, on_finished=on_finished)

    def run_copies(self, task: Callable[..., Any], arguments: tuple) -> list[Any]:
        """`task(*arguments)` once per worker; their results."""
        return self.copies(task, arguments)


def _later(path: str, **settings: Any) -> Callable[..., Any]:
    """The function at `path` ("module:function") given `settings`, imported on its first call:
    the executors' modules load torch, which the run command imports after its workers start."""
    module, name = path.split(":")

    def call(*arguments: Any, **more: Any) -> Any:
        return getattr(import_module(module), name)(*arguments, **settings, **more)

    return call


@dataclass
class ClusterLink:
    """The cluster of `--cluster ADDRESS`, connected on first use, after the command's own
    checks (a `local:N` cluster starts N processes); `stack` closes it when the command ends."""

    address: str
    stack: ExitStack
    cluster: Any = field(default=None, repr=False)  # harness.execution.cluster.Cluster

    def connect(self) -> Any:
        if self.cluster is None:
            try:
                from harness.execution.cluster import connected
            except ImportError:
                raise InputError(
                    "--cluster: Dask's distributed is not installed; allowed: install Heedful's "
                    "`cluster` extra (pip install 'heedful[cluster]')"
                ) from None
            self.cluster = self.stack.enter_context(connected(self.address))
        return self.cluster


@dataclass(frozen=True)
class Resources:
    """What the command was given: local jobs and torch threads each, local workers started
    early (jobs - 1 of them; the first execution takes them over), a cluster to use."""

    jobs: int = 1
    threads: int = 1
    workers: Workers | None = None
    cluster: ClusterLink | None = None


def _local(given: Resources) -> Executor:
    """This process and jobs - 1 local worker processes (harness.execution.local)."""
    check_threads(given.jobs, given.threads)
    on_cores = {"jobs": given.jobs, "threads": given.threads}
    return Executor(
        "local",
        f"{given.jobs} worker(s)",
        True,  # the store is on this machine
        _later("harness.execution.local:execute", workers=given.workers, **on_cores),
        _later("harness.execution.local:run_copies", **on_cores),
    )


def _cluster(given: Resources) -> Executor:
    """The workers of a Dask cluster (harness.execution.cluster); only this process stores,
    since workers may be on machines that cannot reach the store."""
    address = given.cluster.address
    if address.startswith("local:"):  # its worker processes share this machine's cores
        workers = int(address.split(":", 1)[1])
        check_threads(workers, given.threads, f"--cluster {address}", "workers")
    on_cluster = {"cluster": given.cluster.connect(), "threads": given.threads}
    where = f"the cluster {address}"
    return Executor(
        "cluster",
        where,
        False,
        _later("harness.execution.cluster:execute_on_cluster", **on_cluster),
        _later("harness.execution.cluster:run_copies_on_cluster", **on_cluster),
    )


EXECUTORS: dict[str, Callable[[Resources], Executor]] = {"local": _local, "cluster": _cluster}


def executor_for(given: Resources) -> Executor:
    """The cluster's executor when one is given, else local processes; both check that
    processes x threads fit this machine's cores where they share them."""
    return EXECUTORS["local" if given.cluster is None else "cluster"](given)
