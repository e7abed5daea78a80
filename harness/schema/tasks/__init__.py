"""The task registry: every task a suite can pose, and what each declares (declaration.py).

Adding a task is one module in this folder (its TaskKind, and scorers if it needs its own) and
one line in TASKS; the stages read the declaration and compare no task names.
"""

from __future__ import annotations

from typing import Literal

from harness.schema.tasks.declaration import Metric, TaskKind
from harness.schema.tasks.link_prediction import LINK_PREDICTION, LinkOptions
from harness.schema.tasks.node_classification import NODE_CLASSIFICATION

TASKS: dict[str, TaskKind] = {
    "node_classification": NODE_CLASSIFICATION,
    "link_prediction": LINK_PREDICTION,
}
DEFAULT_TASK = "node_classification"

Task = Literal[tuple(TASKS)]  # type: ignore[valid-type]  # the names registered above


def task_kind(name: str) -> TaskKind:
    """The declaration of a registered task."""
    return TASKS[name]


def declared_metrics() -> dict[str, Metric]:
    """Every metric of every task by name, each once (its first declaration), in registry order."""
    declared: dict[str, Metric] = {}
    for kind in TASKS.values():
        for metric in kind.metrics:
            declared.setdefault(metric.name, metric)
    return declared


def metric_names() -> tuple[str, ...]:
    """Every metric of every task, each once, in registry order (the store's test columns)."""
    return tuple(declared_metrics())


def first_metric_names() -> tuple[str, ...]:
    """The default task's metrics, which every stored run and baseline has held from the start."""
    return TASKS[DEFAULT_TASK].metric_names


def tasks_scoring(metric: str) -> list[str]:
    """The tasks that declare `metric`."""
    return [name for name, kind in TASKS.items() if metric in kind.metric_names]


def metric_label(name: str) -> str:
    """How reports name a metric (`macro_f1` -> `macro-F1`); unknown names as given."""
    metric = declared_metrics().get(name)
    return name if metric is None else metric.label


def tasks_text() -> str:
    """`node_classification (one class per node) or link_prediction (...)`, for the reference."""
    return " or ".join(f"{name} ({kind.summary})" for name, kind in TASKS.items())


def metrics_text() -> str:
    """Each task's metrics, its default marked: `node_classification: accuracy (default), ...`."""
    return "; ".join(
        f"{name}: "
        + ", ".join(
            f"{metric.name} (default)" if metric.name == kind.default_metric else metric.name
            for metric in kind.metrics
        )
        for name, kind in TASKS.items()
    )


def options_sections() -> dict[str, str]:
    """Each task's own suite table and the task it belongs to: {"link": "link_prediction"}."""
    return {kind.options_section: name for name, kind in TASKS.items() if kind.options_section}


def tasks_with(method: str) -> list[str]:
    """Titles of the tasks whose splits accept `method`."""
    return [
        kind.title
        for kind in TASKS.values()
        if kind.split_methods is None or method in kind.split_methods
    ]


__all__ = ["DEFAULT_TASK", "TASKS", "LinkOptions", "Metric", "Task", "TaskKind", "task_kind"]
