"""The executor registry: where runs train, behind one narrow interface (Executor).

An executor runs specs into the store (`execute(specs, store_path, on_finished)`: every spec
not stored yet, each stored as it ends, a run that raises reported by one line naming it) and
runs copies of one long task, such as a tuning worker, one per worker (`run_copies(task,
arguments, data)`: a cluster sends the graphs of `data` to its workers, which read no data
file); both executions end in one Executed. `workers_store` says whether its workers
may write the result store themselves; if not, this process stores what they send back. A new
executor is one class here (set up from the command's Resources) and one entry in EXECUTORS.
"""

from __future__ import annotations

from collections.abc import Callable
from contextlib import ExitStack
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, ClassVar, Protocol

from harness.errors import InputError
from harness.execution.pool import Workers, check_threads

if TYPE_CHECKING:  # kept light: the run command starts spawned workers before heavy imports
    from pydantic import BaseModel

    from harness.execution.cluster import Cluster
    from harness.execution.executed import Executed
    from harness.planning import RunSpec
    from harness.storage import store


@dataclass
class ClusterLink:
    """The cluster of `--cluster ADDRESS`, connected on first use, after the command's own
    checks (a `local:N` cluster starts N processes); `stack` closes it when the command ends."""

    address: str
    stack: ExitStack
    cluster: Cluster | None = field(default=None, repr=False)

    def connect(self) -> Cluster:
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


class Executor(Protocol):
    """Where runs train; the commands and tuning use nothing else of an executor."""

    workers_store: ClassVar[bool]  # may its workers write the result store themselves?

    @classmethod
    def set_up(cls, given: Resources) -> Executor:
        """The executor for what the command was given, its processes x threads checked."""

    @property
    def where(self) -> str:
        """Where the runs train, for messages."""

    def execute(
        self,
        specs: list[RunSpec],
        store_path: store.Store,
        on_finished: Callable[[str], None] | None = None,
    ) -> Executed:
        """Every spec not stored yet, trained and stored as each ends; a run that raises is
        one line naming it, a run that raises InputError stops them all."""

    def run_copies(
        self, task: Callable[..., Any], arguments: tuple, data: tuple[BaseModel, ...] = ()
    ) -> list[Any]:
        """`task(*arguments)` once per worker; their results. `data`: the data sections the
        task loads, pinned (DataSource.pinned); a cluster sends their graphs to its workers."""


@dataclass(frozen=True)
class LocalExecutor:
    """This process and jobs - 1 local worker processes (harness.execution.local), each on
    `threads` torch threads; `workers`, if given, were started early and are taken over."""

    jobs: int = 1
    threads: int = 1
    workers: Workers | None = field(default=None, compare=False, repr=False)
    workers_store: ClassVar[bool] = True  # the store is on this machine

    def __post_init__(self) -> None:
        check_threads(self.jobs, self.threads)

    @classmethod
    def set_up(cls, given: Resources) -> LocalExecutor:
        return cls(given.jobs, given.threads, given.workers)

    @property
    def where(self) -> str:
        return f"{self.jobs} worker(s)"

    def execute(
        self,
        specs: list[RunSpec],
        store_path: store.Store,
        on_finished: Callable[[str], None] | None = None,
    ) -> Executed:
        from harness.execution import local  # torch: the run command imports it late

        return local.execute(specs, store_path, self.jobs, on_finished, self.workers, self.threads)

    def run_copies(
        self, task: Callable[..., Any], arguments: tuple, data: tuple[BaseModel, ...] = ()
    ) -> list[Any]:
        from harness.execution import local  # its workers read the data files of this machine

        return local.run_copies(task, arguments, self.jobs, self.threads)


@dataclass(frozen=True)
class ClusterExecutor:
    """The workers of a connected Dask cluster (harness.execution.cluster), each run on
    `threads` torch threads; only this process stores, since workers may be on machines that
    cannot reach the store."""

    cluster: Cluster
    threads: int = 1
    workers_store: ClassVar[bool] = False

    @classmethod
    def set_up(cls, given: Resources) -> ClusterExecutor:
        address = given.cluster.address
        if address.startswith("local:"):  # its worker processes share this machine's cores
            workers = int(address.split(":", 1)[1])
            check_threads(workers, given.threads, f"--cluster {address}", "workers")
            return cls(given.cluster.connect(), given.threads)
        from harness.execution.reaching import RUNS_KEPT, holding_scheduler
        from harness.execution.worker_cores import check_threads_on_workers

        cluster = given.cluster.connect()
        with holding_scheduler(cluster.client, address, RUNS_KEPT):
            check_threads_on_workers(cluster, given.threads)  # a host's workers share its cores
        return cls(cluster, given.threads)

    @property
    def where(self) -> str:
        return f"the cluster {self.cluster.address}"

    def execute(
        self,
        specs: list[RunSpec],
        store_path: store.Store,
        on_finished: Callable[[str], None] | None = None,
    ) -> Executed:
        from harness.execution import cluster
        from harness.execution.reaching import RUNS_KEPT, holding_scheduler

        with holding_scheduler(self.cluster.client, self.cluster.address, RUNS_KEPT):
            return cluster.execute_on_cluster(
                specs, store_path, self.cluster, self.threads, on_finished
            )

    def run_copies(
        self, task: Callable[..., Any], arguments: tuple, data: tuple[BaseModel, ...] = ()
    ) -> list[Any]:
        from harness.execution import cluster
        from harness.execution.reaching import TRIALS_KEPT, holding_scheduler

        with holding_scheduler(self.cluster.client, self.cluster.address, TRIALS_KEPT):
            return cluster.run_copies_on_cluster(task, arguments, self.cluster, self.threads, data)


EXECUTORS: dict[str, type[Executor]] = {"local": LocalExecutor, "cluster": ClusterExecutor}


def executor_for(given: Resources) -> Executor:
    """The cluster's executor when one is given, else local processes; both check that
    processes x threads fit this machine's cores where they share them."""
    return EXECUTORS["local" if given.cluster is None else "cluster"].set_up(given)
