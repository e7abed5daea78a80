"""Classification metrics: scikit-learn for reported figures, a torch twin for per-epoch checks."""

from __future__ import annotations

import numpy as np
import torch
from sklearn.metrics import accuracy_score, f1_score, roc_auc_score

METRICS = ("accuracy", "macro_f1", "roc_auc")


def score(name: str, logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    """Metric `name` from scikit-learn for these logits and labels."""
    truth = labels.numpy()
    if name == "accuracy":
        return float(accuracy_score(truth, logits.argmax(1).numpy()))
    if name == "macro_f1":
        return float(f1_score(truth, logits.argmax(1).numpy(), average="macro"))
    return roc_auc(torch.softmax(logits, dim=1).double().numpy(), truth, classes)


def score_probabilities(
    name: str, probabilities: np.ndarray, labels: np.ndarray, classes: int
) -> float:
    """Metric `name` from stored class probabilities (rows: nodes), as `score` from logits."""
    if name == "accuracy":
        return float(accuracy_score(labels, probabilities.argmax(1)))
    if name == "macro_f1":
        return float(f1_score(labels, probabilities.argmax(1), average="macro"))
    return roc_auc(probabilities.astype(np.float64), labels, classes)


def roc_auc(probabilities: np.ndarray, truth: np.ndarray, classes: int) -> float:
    """One-vs-rest ROC-AUC; NaN when fewer than two classes are present."""
    if len(np.unique(truth)) < 2:
        return float("nan")  # ROC-AUC needs both classes; suites are checked for this up front
    if classes == 2:
        return float(roc_auc_score(truth, probabilities[:, 1]))
    present = np.unique(truth)
    if len(present) < classes:
        # one-vs-rest over the classes present; renormalise their probabilities
        probabilities = probabilities[:, present]
        probabilities = probabilities / probabilities.sum(1, keepdims=True)
        if len(present) == 2:  # scikit-learn reads two classes as a binary problem
            return float(roc_auc_score(truth == present[1], probabilities[:, 1]))
        return float(roc_auc_score(truth, probabilities, multi_class="ovr", labels=present))
    return float(roc_auc_score(truth, probabilities, multi_class="ovr"))


def fast_score(name: str, logits: torch.Tensor, labels: torch.Tensor, classes: int) -> float:
    """Same value as `score`, computed in torch for accuracy and macro-F1 (used every epoch)."""
    if name == "accuracy":
        return float((logits.argmax(1) == labels).double().mean())
    if name == "macro_f1":
        predicted = logits.argmax(1)
        true_positive = torch.bincount(labels[predicted == labels], minlength=classes).double()
        predicted_count = torch.bincount(predicted, minlength=classes).double()
        true_count = torch.bincount(labels, minlength=classes).double()
        present = (predicted_count + true_count) > 0
        f1 = 2 * true_positive / (predicted_count + true_count).clamp(min=1)
        return float(f1[present].mean())
    return score(name, logits, labels, classes)


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
