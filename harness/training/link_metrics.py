"""Link prediction metrics over scored pairs (label 1 an edge, 0 a sampled non-edge).

roc_auc            scikit-learn's roc_auc_score
average_precision  scikit-learn's average_precision_score
hits_at_k          share of positive pairs scored strictly above the K-th highest negative score,
                   as the Open Graph Benchmark's link evaluator defines Hits@K (Hu et al., 2020);
                   with fewer than K negatives every positive counts as a hit, as there
"""

from __future__ import annotations

import numpy as np
import torch
from scipy.stats import rankdata
from sklearn.metrics import average_precision_score, roc_auc_score

LINK_METRICS = ("roc_auc", "average_precision", "hits_at_k")


def hits_at_k(positive: torch.Tensor, negative: torch.Tensor, k: int) -> float:
    """Share of `positive` scores above the K-th highest of `negative` (OGB's Hits@K)."""
    if len(negative) < k:
        return 1.0
    threshold = torch.topk(negative, k).values[-1]
    return float((positive > threshold).double().mean())


def link_score(name: str, scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> float:
    """Metric `name` of these pair scores; NaN when there are no pairs (test pairs in tuning)."""
    if len(labels) == 0:
        return float("nan")
    truth = labels.numpy() > 0.5
    if name == "roc_auc":
        return float(roc_auc_score(truth, scores.double().numpy()))
    if name == "average_precision":
        return float(average_precision_score(truth, scores.double().numpy()))
    positive = labels > 0.5
    return hits_at_k(scores[positive], scores[~positive], hits_k)


def link_scores(scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> dict[str, float]:
    """Every link metric of these pair scores."""
    return {name: link_score(name, scores, labels, hits_k) for name in LINK_METRICS}


def fast_link_score(name: str, scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> float:
    """Same value as `link_score` without scikit-learn's input checks (used every epoch).

    ROC-AUC as the Mann-Whitney statistic (R_pos - P(P+1)/2) / (P N) with average ranks for
    ties; average precision as sum_n (R_n - R_{n-1}) P_n over distinct score thresholds.
    """
    if len(labels) == 0 or name == "hits_at_k":
        return link_score(name, scores, labels, hits_k)
    values, truth = scores.double().numpy(), labels.numpy() > 0.5
    positives = int(truth.sum())
    if name == "roc_auc":
        negatives = len(truth) - positives
        ranks = rankdata(values)
        rank_sum = ranks[truth].sum() - positives * (positives + 1) / 2
        return float(rank_sum / (positives * negatives))
    order = np.argsort(-values, kind="mergesort")
    values, truth = values[order], truth[order]
    last_of_threshold = np.r_[np.flatnonzero(np.diff(values)), len(values) - 1]
    true_positives = np.cumsum(truth)[last_of_threshold]
    precision = true_positives / (last_of_threshold + 1)
    recall_gain = np.diff(np.r_[0, true_positives]) / positives
    return float((recall_gain * precision).sum())
