"""How a run of each task is performed: the training entry point its declared objective names
(harness/schema/tasks: `objective`)."""

from __future__ import annotations

from collections.abc import Callable

from harness.planning import RunSpec
from harness.schema.tasks import task_kind
from harness.training.fit import RunResult
from harness.training.fit import perform as perform_nodes
from harness.training.link_fit import perform_links

# objective name -> the loop that trains with it
OBJECTIVES: dict[str, Callable[..., RunResult]] = {
    "node_loss": perform_nodes,
    "link_loss": perform_links,
}


def perform(
    spec: RunSpec,
    on_epoch: Callable[[int, float], None] | None = None,
    validation_only: bool = False,
) -> RunResult:
    """One run of the spec's task (see training.fit.perform for the arguments)."""
    return OBJECTIVES[task_kind(spec.task).objective](spec, on_epoch, validation_only)
