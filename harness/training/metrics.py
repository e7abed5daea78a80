"""Node classification metrics of logits: the task's declared scorers (scikit-learn) for reported
figures, torch twins (`fast_*`, declared as the metrics' `every_epoch`) for per-epoch checks."""

from __future__ import annotations

import numpy as np
import torch

from harness.schema.named import imported
from harness.schema.tasks.node_classification import NODE_CLASSIFICATION

METRICS = NODE_CLASSIFICATION.metric_names


def score(name: str, logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    """Metric `name` from its declared scorer for these logits' class probabilities."""
    probabilities = torch.softmax(logits, dim=1).double().numpy()
    return score_probabilities(name, probabilities, labels.numpy(), classes)


def score_probabilities(
    name: str, probabilities: np.ndarray, labels: np.ndarray, classes: int
) -> float:
    """Metric `name` from stored class probabilities (rows: nodes), as `score` from logits."""
    return NODE_CLASSIFICATION.metric(name).score(probabilities, labels, {"classes": classes})


def fast_accuracy(logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    return float((logits.argmax(1) == labels).double().mean())


def fast_macro_f1(logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    """Macro-F1 over the classes predicted or present (scikit-learn's, from bincounts)."""
    predicted = logits.argmax(1)
    true_positive = torch.bincount(labels[predicted == labels], minlength=classes).double()
    predicted_count = torch.bincount(predicted, minlength=classes).double()
    true_count = torch.bincount(labels, minlength=classes).double()
    present = (predicted_count + true_count) > 0
    f1 = 2 * true_positive / (predicted_count + true_count).clamp(min=1)
    return float(f1[present].mean())


def fast_score(name: str, logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    """Same value as `score`, by the metric's torch twin where it declares one (every epoch)."""
    twin = NODE_CLASSIFICATION.metric(name).every_epoch
    if twin is None:
        return score(name, logits, labels, classes)
    return float(imported(twin)(logits, labels, classes))


def scores_of_test_nodes(
    logits: torch.Tensor, labels: torch.Tensor, classes: int
) -> tuple[dict[str, float], list[str]]:
    """Every metric on the test nodes (NaN without test nodes, as while tuning), and a warning
    when the test labels miss some classes."""
    scores = {
        name: score(name, logits, labels, classes) if len(labels) else float("nan")
        for name in METRICS
    }
    present = int(torch.unique(labels).numel())
    # scikit-learn's one-vs-rest ROC-AUC can only cover the classes the test split holds
    warnings = (
        [f"the test split holds {present} of {classes} classes; ROC-AUC covers those present"]
        if 0 < present < classes
        else []
    )
    return scores, warnings
