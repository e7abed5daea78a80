"""A toy task, as a contributor would add one: this module plus one line in TASKS.

"toy_labels" classifies nodes like node classification but scores balanced accuracy, its own
metric, takes only fraction and per-class splits and refuses the homophily map. ToyOptions is
the table of its own a task may declare (options_section, options). The tests add
its registry line themselves (tests/test_task_registry.py), so the shipped registry stays as it
is.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from pydantic import Field

from harness.schema.base import StrictModel
from harness.schema.tasks.declaration import Metric, TaskKind

NAME = "toy_labels"
REGISTRY_LINE = f"TASKS[{NAME!r}] = TOY_LABELS"  # what a contributor writes in TASKS


def balanced_accuracy(
    probabilities: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]
) -> float:
    """Mean recall over the classes present (scikit-learn's balanced_accuracy_score)."""
    from sklearn.metrics import balanced_accuracy_score

    return float(balanced_accuracy_score(labels, probabilities.argmax(1)))


class ToyOptions(StrictModel):
    """How the toy task weighs its classes (a table of its own, `[toy]`)."""

    class_weight_power: float = Field(0.0, ge=0, le=1, description="Inverse-frequency power.")


TOY_LABELS = TaskKind(
    title="toy labelling",
    summary="one class per node, scored class by class",
    metrics=(Metric("balanced_accuracy", "balanced accuracy", "toy_task:balanced_accuracy"),),
    default_metric="balanced_accuracy",
    objective="node_loss",
    data_check="harness.execution.preflight:check_node_splits",
    split_methods=("fractions", "per_class"),
    refused={"homophily_map": "the toy task keeps to the suite's own graph"},
)
