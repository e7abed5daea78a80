"""Scorers of node classification, from class probabilities (rows: nodes) and true labels.

accuracy   scikit-learn's accuracy_score of the most probable class
macro_f1   scikit-learn's f1_score(average="macro") of the most probable class
roc_auc    scikit-learn's roc_auc_score, one-vs-rest over the classes present
`facts["classes"]` is the number of classes of the graph. Imported only when a run scores.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from sklearn.metrics import accuracy_score, f1_score, roc_auc_score


def accuracy(probabilities: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    return float(accuracy_score(labels, probabilities.argmax(1)))


def macro_f1(probabilities: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    return float(f1_score(labels, probabilities.argmax(1), average="macro"))


def roc_auc(probabilities: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    return one_vs_rest_roc_auc(probabilities.astype(np.float64), labels, facts["classes"])


def one_vs_rest_roc_auc(probabilities: np.ndarray, truth: np.ndarray, classes: int) -> float:
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
