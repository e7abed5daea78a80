"""What a task declares: its metrics, the suite sections it takes or refuses, and what applies.

Every stage reads these declarations instead of comparing task names (tests/test_task_names.py).
Functions a declaration needs at run time (scorers, the data check, the training objective) are
named by import path or registry name, so that declaring a task imports neither torch nor
scikit-learn.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from pydantic import BaseModel

from harness.schema.named import imported

# a scorer: score(predicted, truth, facts) -> float, numpy arrays in; `facts` holds what the
# task's runs know besides them, e.g. {"classes": 7} or {"hits_k": 50}
Scorer = Callable[[Any, Any, Mapping[str, int]], float]


@dataclass(frozen=True)
class Metric:
    """One metric a task's runs store (column `test_<name>`): its label in reports, its range,
    its direction, and the function that computes it (`scorer`, a "module:function" path).
    `every_epoch`: a faster twin giving the same value, for the per-epoch validation score;
    its arguments are the task's own (see the task's training loop). The stages rank a higher
    value as better (early stopping, tuning, verdicts, gates): `higher_is_better` is declared
    for them to read, and tests/test_task_registry.py holds every metric to True until they do."""

    name: str
    label: str
    scorer: str
    every_epoch: str | None = None
    low: float = 0.0
    high: float = 1.0
    higher_is_better: bool = True

    def score(self, predicted: Any, truth: Any, facts: Mapping[str, int]) -> float:
        """The metric of these predictions (numpy arrays), by its declared scorer."""
        return float(imported(self.scorer)(predicted, truth, facts))


# a section check: the section's validated value -> what is wrong with it for this task, or None
SectionCheck = Callable[[Any], "str | None"]


@dataclass(frozen=True)
class TaskKind:
    """One task a suite can pose.

        `title`: how sentences name it ("link prediction"); `summary`: what it predicts, for the
    suite-file reference ("which node pairs are edges"). `metrics`: every metric its runs store,
        `default_metric` the one a suite without `metric` compares. `split_methods`: the `[split]`
        methods it accepts (None: all). `refused`: suite sections it does not extend to, with the
        reason (refused rather than silently ignored); `section_checks`: further rules for sections
        it takes. `options_section`/`options`: its own suite table (e.g. `[link]`), if any.
        `keyed`: whether run keys and baseline hashes name the task (False only for the task that
        existed before tasks did, so its stored keys stay as they were). `sampled_batches`,
        `compiles` and `breakdown` (the per-node breakdown of scored test nodes) say what applies;
        `no_compile_reason` is what a run records when compiling does not apply. `node_labels`:
        whether its runs read node labels (`check` warns about a label column otherwise).
    `edge_attributes`: whether its training passes edge attributes to the models that read them.
        `data_check`: "module:function" check(suite, data, source) of every seed's split, run by
        `check` before any run. `objective`: the name of its entry in the training stage's objective
        registry. `output_option`: the field of its options table that sets the model's output width
    (None: one output per class of the data). `run_memory`: "module:function" bytes(suite, size)
    a run holds beyond its model's step (link prediction: the scored pairs and their negatives),
    with the option that moves them most; None when there is nothing beyond it.
    `many_graphs`: its data is a collection of small
    graphs with one label each (data sources that declare `many_graphs`), and its contenders
    pool each graph's node states with their `readout`.
    """

    title: str
    summary: str
    metrics: tuple[Metric, ...]
    default_metric: str
    objective: str
    data_check: str
    split_methods: tuple[str, ...] | None = None
    refused: Mapping[str, str] = field(default_factory=dict)
    section_checks: Mapping[str, SectionCheck] = field(default_factory=dict)
    edge_attributes: bool = False
    options_section: str | None = None
    options: type[BaseModel] | None = None
    output_option: str | None = None
    run_memory: str | None = None
    keyed: bool = True
    sampled_batches: bool = True
    compiles: bool = True
    no_compile_reason: str = ""
    breakdown: bool = True
    node_labels: bool = True
    many_graphs: bool = False

    @property
    def metric_names(self) -> tuple[str, ...]:
        return tuple(metric.name for metric in self.metrics)

    def metric(self, name: str) -> Metric:
        """The declared metric `name` (KeyError for a name the task does not define)."""
        for metric in self.metrics:
            if metric.name == name:
                return metric
        raise KeyError(name)
