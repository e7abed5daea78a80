"""Link prediction metrics of pair scores (label 1 an edge, 0 a sampled non-edge), by the task's
declared scorers (harness/schema/tasks/link_scores.py, which defines each)."""

from __future__ import annotations

import torch

from harness.schema.named import imported
from harness.schema.tasks.link_prediction import LINK_PREDICTION
from harness.schema.tasks.link_scores import hits_above


def hits_at_k(positive: torch.Tensor, negative: torch.Tensor, k: int) -> float:
    """Share of `positive` scores above the K-th highest of `negative` (OGB's Hits@K)."""
    return hits_above(positive.numpy(), negative.numpy(), k)


def link_score(name: str, scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> float:
    """Metric `name` of these pair scores; NaN when there are no pairs (test pairs in tuning)."""
    return LINK_PREDICTION.metric(name).score(scores.numpy(), labels.numpy(), {"hits_k": hits_k})


def link_scores(scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> dict[str, float]:
    """Every link metric of these pair scores."""
    return {name: link_score(name, scores, labels, hits_k) for name in LINK_PREDICTION.metric_names}


def fast_link_score(name: str, scores: torch.Tensor, labels: torch.Tensor, hits_k: int) -> float:
    """Same value as `link_score` by the metric's twin without scikit-learn's input checks, where
    it declares one (used every epoch)."""
    twin = LINK_PREDICTION.metric(name).every_epoch
    if twin is None:
        return link_score(name, scores, labels, hits_k)
    return float(imported(twin)(scores.numpy(), labels.numpy(), {"hits_k": hits_k}))
