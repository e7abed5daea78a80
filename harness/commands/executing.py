"""How the commands execute run specs: the executor chosen from what the command was given
(harness.execution.executors), and what it did. Kept free of heavy imports (see run.py)."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import ExitStack, contextmanager
from typing import TYPE_CHECKING

from harness.commands.feedback import Feedback
from harness.execution.executed import Executed
from harness.execution.executors import ClusterLink, Executor
from harness.planning import RunSpec
from harness.storage.suite_runs import SuiteRuns

if TYPE_CHECKING:
    from harness.storage.database import Location


class ExecutedStatus:
    """An outcome whose exit status is its execution's."""

    executed: Executed

    @property
    def status(self) -> int:
        return self.executed.status


def check_cluster_use(chosen: SuiteRuns, storage: str | None, address: str | None) -> None:
    """Before connecting: a tuned suite on a cluster needs a storage its workers reach."""
    if address is None:
        return
    if chosen.suite.tuning is not None:
        from harness.tuning.on_cluster import check_shared
        from harness.tuning.storage import default_storage_url

        check_shared(address, storage or default_storage_url(chosen.store))


@contextmanager
def connected_cluster(address: str | None) -> Iterator[ClusterLink | None]:
    """The cluster of `--cluster` (or None without one), handed to the command functions: it
    connects when the first executor is chosen, its workers checked before anything is
    stored, and closes when the block ends."""
    if address is None:
        yield None
        return
    if not address.startswith("local:"):
        from harness.execution.reaching import reach_scheduler

        reach_scheduler(address)  # before the heavy imports: an answer within the stated wait
    with ExitStack() as stack:
        yield ClusterLink(address, stack)


def execute_specs(
    specs: list[RunSpec], store_path: Location, executor: Executor, feedback: Feedback
) -> Executed:
    """Run the specs not stored yet on the executor, counting each finished run in the
    feedback's progress."""
    from harness.execution.runs import pending

    todo = len(pending(specs, store_path))
    with feedback.progress(specs[0].suite if specs else "", todo) as advance:
        return executor.execute(specs, store_path, lambda _: advance())
