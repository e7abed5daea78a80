"""One run of any task: the data, the task's objective set up by name, the one training loop,
then the diagnostics and what the run took from the machine."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

import torch
from torch_geometric.data import Data

from harness.data import load_graph
from harness.planning import RunSpec
from harness.results import RunResult
from harness.schema.tasks import task_kind
from harness.training.compiled import use_compile_cache
from harness.training.link_loss import prepare_link_run
from harness.training.loop import fit
from harness.training.node_loss import prepare_node_run
from harness.training.objectives import Prepared
from harness.training.resources import peak_resident_mb, reset_peak_resident

# objective name (a task's `objective` in harness/schema/tasks) -> how a run of it is set up:
# model, feed and objective from the spec and the loaded data
OBJECTIVES: dict[str, Callable[[RunSpec, Data, bool], Prepared]] = {
    "node_loss": prepare_node_run,
    "link_loss": prepare_link_run,
}


def as_trained(spec: RunSpec, result: RunResult) -> RunSpec:
    """The spec with the compile mode the run used: a run that fell back is stored as eager."""
    if spec.training.compile is True and not result.compiled:
        return replace(spec, training=spec.training.model_copy(update={"compile": False}))
    return spec


def perform(
    spec: RunSpec,
    on_epoch: Callable[[int, float], None] | None = None,
    validation_only: bool = False,
) -> RunResult:
    """Data, split and initialisation from the spec's seed, then the one loop.

    `on_epoch(epoch, validation_score)` may raise to stop the run early (pruning).
    `validation_only` (tuning) keeps the test set out of the run: it is never read, and the
    test scores are NaN.

    extras also get `threads` (torch threads of this run) and `peak_resident_mb` (the process's
    peak resident memory during the run, see harness.training.resources).
    """
    measured = reset_peak_resident()
    threads = torch.get_num_threads()
    if spec.training.compile is True:
        use_compile_cache(spec.hop_cache)
    task = task_kind(spec.task)
    prepared = OBJECTIVES[task.objective](spec, load_graph(spec.data), validation_only)
    refusal = None if task.compiles else task.no_compile_reason
    model, feed, objective = prepared.model, prepared.feed, prepared.objective
    result = fit(model, feed, objective, spec.training, on_epoch, refusal)
    extras = {**result.extras, **prepared.diagnose(), "threads": threads}
    extras["peak_resident_mb"] = peak_resident_mb() if measured else None
    if spec.training.kernel == "sparse":  # scatter runs keep the extras they always had
        extras["kernel"] = "sparse"
    return replace(result, extras=extras)
