"""Scorers of graph classification beyond those it shares with node classification
(node_scores.py: accuracy, macro-F1, ROC-AUC one-vs-rest), from class probabilities (rows:
graphs) and true labels.

average_precision  scikit-learn's average_precision_score: of the second class when there are
                   two, else the macro average over one-vs-rest problems of the classes present
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from sklearn.metrics import average_precision_score
from sklearn.preprocessing import label_binarize


def average_precision(
    probabilities: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]
) -> float:
    if len(np.unique(labels)) < 2:
        return float("nan")  # precision-recall needs both outcomes present
    if facts["classes"] == 2:
        return float(average_precision_score(labels, probabilities[:, 1]))
    present = np.unique(labels)
    truth = label_binarize(labels, classes=present)
    return float(average_precision_score(truth, probabilities[:, present], average="macro"))
