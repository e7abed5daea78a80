"""Task registry: how a run of each task is performed, which metrics it stores, which
diagnostics apply. The schema's TASK_METRICS names the same tasks and metrics."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from harness.planning import RunSpec
from harness.training.fit import RunResult
from harness.training.fit import perform as perform_nodes
from harness.training.link_fit import perform_links
from harness.training.link_metrics import LINK_METRICS
from harness.training.metrics import METRICS


@dataclass(frozen=True)
class Task:
    """One task: its run function, the test metrics every run stores, and its diagnostics."""

    perform: Callable[..., RunResult]
    metrics: tuple[str, ...]
    diagnostics: str


TASKS: dict[str, Task] = {
    "node_classification": Task(
        perform_nodes, METRICS, "attention entropy, self share and same-label share"
    ),
    "link_prediction": Task(
        perform_links, LINK_METRICS, "attention entropy and self share (no node labels)"
    ),
}


def perform(
    spec: RunSpec,
    on_epoch: Callable[[int, float], None] | None = None,
    validation_only: bool = False,
) -> RunResult:
    """One run of the spec's task (see training.fit.perform for the arguments)."""
    return TASKS[spec.task].perform(spec, on_epoch, validation_only)
