"""Scorers of link prediction over scored pairs (label 1 an edge, 0 a sampled non-edge).

roc_auc            scikit-learn's roc_auc_score
average_precision  scikit-learn's average_precision_score
hits_at_k          share of positive pairs scored strictly above the K-th highest negative score,
                   as the Open Graph Benchmark's link evaluator defines Hits@K (Hu et al., 2020);
                   with fewer than K negatives every positive counts as a hit, as there
`facts["hits_k"]` is K. Every scorer gives NaN when there are no pairs (test pairs in tuning).
Imported only when a run scores.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
from scipy.stats import rankdata
from sklearn.metrics import average_precision_score, roc_auc_score


def roc_auc(scores: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    if len(labels) == 0:
        return float("nan")
    return float(roc_auc_score(labels > 0.5, scores.astype(np.float64)))


def average_precision(scores: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    if len(labels) == 0:
        return float("nan")
    return float(average_precision_score(labels > 0.5, scores.astype(np.float64)))


def hits_at_k(scores: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    if len(labels) == 0:
        return float("nan")
    positive = labels > 0.5
    return hits_above(scores[positive], scores[~positive], facts["hits_k"])


def hits_above(positive: np.ndarray, negative: np.ndarray, k: int) -> float:
    """Share of `positive` scores above the K-th highest of `negative` (OGB's Hits@K)."""
    if len(negative) < k:
        return 1.0
    threshold = np.partition(negative, len(negative) - k)[len(negative) - k]
    return float((positive > threshold).mean())


def rank_roc_auc(scores: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]) -> float:
    """roc_auc without scikit-learn's input checks (used every epoch): the Mann-Whitney statistic
    (R_pos - P(P+1)/2) / (P N) with average ranks for ties."""
    if len(labels) == 0:
        return float("nan")
    values, truth = scores.astype(np.float64), labels > 0.5
    positives = int(truth.sum())
    negatives = len(truth) - positives
    rank_sum = rankdata(values)[truth].sum() - positives * (positives + 1) / 2
    return float(rank_sum / (positives * negatives))


def threshold_average_precision(
    scores: np.ndarray, labels: np.ndarray, facts: Mapping[str, int]
) -> float:
    """average_precision without scikit-learn's input checks (used every epoch):
    sum_n (R_n - R_{n-1}) P_n over distinct score thresholds."""
    if len(labels) == 0:
        return float("nan")
    values, truth = scores.astype(np.float64), labels > 0.5
    positives = int(truth.sum())
    order = np.argsort(-values, kind="mergesort")
    values, truth = values[order], truth[order]
    last_of_threshold = np.r_[np.flatnonzero(np.diff(values)), len(values) - 1]
    true_positives = np.cumsum(truth)[last_of_threshold]
    precision = true_positives / (last_of_threshold + 1)
    recall_gain = np.diff(np.r_[0, true_positives]) / positives
    return float((recall_gain * precision).sum())
