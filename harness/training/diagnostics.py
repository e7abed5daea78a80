"""Attention diagnostics: did the trained attention learn anything beyond neighbour averaging?

For each layer l and head h, with alpha_ij the weight node i puts on j over its attention
neighbourhood N(i) (k-hop nodes, plus i itself when the contender attends to itself), d_i = |N(i)|:

entropy_ratio       mean over nodes with d_i >= 2 of H_i / log(d_i), where
                    H_i = -sum_j alpha_ij log alpha_ij. Uniform attention gives exactly 1;
                    attention on one neighbour gives 0.
self_share          mean over nodes of alpha_ii (null when nodes do not attend to themselves);
uniform_self_share  mean over the same nodes of 1 / d_i, what uniform attention would give.
same_label_share    mean over labelled nodes with a labelled neighbour j != i of
                    sum_{j: y_j = y_i} alpha_ij / sum_j alpha_ij (self-loop left out);
neighbour_homophily the same mean with uniform weights: the share of same-label nodes in each
                    neighbourhood, averaged over nodes. It is the chance level of
                    same_label_share: attention "beats chance" when same_label_share exceeds it.

Stored format, `RunResult.extras["attention"]` (and the store's `extras` column):
    {"edges": E, "attend_to_self": bool,
     "heads": [{"layer": 1, "head": 1, "entropy_ratio": ..., "self_share": ... | null,
                "uniform_self_share": ... | null, "same_label_share": ...,
                "neighbour_homophily": ...}, ...],          # one record per layer and head
     "mean": {"entropy_ratio": ..., "self_share": ..., "uniform_self_share": ...,
              "same_label_share": ..., "neighbour_homophily": ...}}   # over all records
Layers and heads count from 1. Labels of all labelled nodes are used: the diagnostics
describe the trained model and never feed back into training or model selection.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import torch
from torch import nn
from torch_geometric.utils import scatter

MEASURES = (
    "entropy_ratio",
    "self_share",
    "uniform_self_share",
    "same_label_share",
    "neighbour_homophily",
)


def _mean(values: torch.Tensor, keep: torch.Tensor) -> float | None:
    return float(values[keep].mean()) if bool(keep.any()) else None


def node_entropy(target: torch.Tensor, alpha: torch.Tensor, nodes: int) -> torch.Tensor:
    """H_i = -sum_j alpha_ij log alpha_ij in nats, for every target node i (0 log 0 = 0)."""
    alpha = alpha.double()
    plogp = torch.where(alpha > 0, alpha * torch.log(alpha), torch.zeros_like(alpha))
    return -scatter(plogp, target, dim_size=nodes, reduce="sum")


def head_measures(
    edge_index: torch.Tensor, alpha: torch.Tensor, labels: torch.Tensor, nodes: int
) -> dict[str, float | None]:
    """The measures above for one head; `alpha` sums to 1 over each target's incoming edges."""
    source, target = edge_index
    alpha = alpha.double()
    degree = scatter(torch.ones_like(alpha), target, dim_size=nodes, reduce="sum")
    entropy = node_entropy(target, alpha, nodes)
    several = degree >= 2
    ratio = entropy / torch.log(degree.clamp(min=2))
    loop = source == target
    measures: dict[str, float | None] = {"entropy_ratio": _mean(ratio, several)}
    has_loop = scatter(loop.double(), target, dim_size=nodes, reduce="sum") > 0
    self_weight = scatter(alpha * loop, target, dim_size=nodes, reduce="sum")
    measures["self_share"] = _mean(self_weight, has_loop)
    measures["uniform_self_share"] = _mean(1 / degree.clamp(min=1), has_loop)
    usable = ~loop & (labels[source] >= 0) & (labels[target] >= 0)
    same = (labels[source] == labels[target]) & usable
    mass = scatter(alpha * usable, target, dim_size=nodes, reduce="sum")
    same_mass = scatter(alpha * same, target, dim_size=nodes, reduce="sum")
    count = scatter(usable.double(), target, dim_size=nodes, reduce="sum")
    same_count = scatter(same.double(), target, dim_size=nodes, reduce="sum")
    has_neighbour = (count > 0) & (mass > 0) & (labels >= 0)
    measures["same_label_share"] = _mean(same_mass / mass.clamp(min=1e-300), has_neighbour)
    measures["neighbour_homophily"] = _mean(same_count / count.clamp(min=1), has_neighbour)
    return measures


def attention_diagnostics(
    model: nn.Module, x: torch.Tensor, edge_index: torch.Tensor, labels: torch.Tensor
) -> dict[str, Any]:
    """Diagnostics of a trained attention model (evaluation mode), in the stored format."""
    if hasattr(model, "embedding"):  # identity feature start: look the node ids up first
        x, model = model.embedding(x), model.inner
    model.eval()
    with torch.no_grad():
        _, edges, weights = model.run(x, edge_index, keep_attention=True)
    nodes = x.size(0)
    records = []
    for layer, alpha in enumerate(weights, start=1):
        for head in range(alpha.size(1)):
            measures = head_measures(edges, alpha[:, head], labels, nodes)
            records.append({"layer": layer, "head": head + 1, **measures})
    mean = {}
    for name in MEASURES:
        values = [r[name] for r in records if r[name] is not None]
        mean[name] = float(np.mean(values)) if values else None
    return {
        "edges": int(edges.size(1)),
        "attend_to_self": bool(model.attend_to_self),
        "heads": records,
        "mean": mean,
    }
