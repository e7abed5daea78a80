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
With typed edges, "edge_types" holds the share of attention per edge type against its share of
edges (harness.training.edge_type_shares). Layers and heads count from 1. Labels of all
labelled nodes are used: the diagnostics describe the trained model and never feed back into
training or model selection. They run for the kinds registered as attending, whose networks
are harness.models.interface.AttentionNetwork.
"""

from __future__ import annotations

from typing import Any, cast

import numpy as np
import torch
from torch import nn
from torch_geometric.data import Data
from torch_geometric.utils import scatter

from harness.data.edge_attributes import edge_types
from harness.models import unwrap
from harness.models.interface import AttentionNetwork
from harness.training.edge_type_shares import TypeShares, node_type_shares
from harness.training.inference import CHUNK_NODES, ChunkedGraph

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


def node_measures(
    edge_index: torch.Tensor, alpha: torch.Tensor, labels: torch.Tensor, nodes: int
) -> dict[str, tuple[torch.Tensor, torch.Tensor]]:
    """Per target node, each measure's value and whether the node counts towards its mean;
    `alpha` sums to 1 over each target's incoming edges."""
    source, target = edge_index
    alpha = alpha.double()
    degree = scatter(torch.ones_like(alpha), target, dim_size=nodes, reduce="sum")
    entropy = node_entropy(target, alpha, nodes)
    loop = source == target
    measures = {"entropy_ratio": (entropy / torch.log(degree.clamp(min=2)), degree >= 2)}
    has_loop = scatter(loop.double(), target, dim_size=nodes, reduce="sum") > 0
    self_weight = scatter(alpha * loop, target, dim_size=nodes, reduce="sum")
    measures["self_share"] = (self_weight, has_loop)
    measures["uniform_self_share"] = (1 / degree.clamp(min=1), has_loop)
    usable = ~loop & (labels[source] >= 0) & (labels[target] >= 0)
    same = (labels[source] == labels[target]) & usable
    mass = scatter(alpha * usable, target, dim_size=nodes, reduce="sum")
    same_mass = scatter(alpha * same, target, dim_size=nodes, reduce="sum")
    count = scatter(usable.double(), target, dim_size=nodes, reduce="sum")
    same_count = scatter(same.double(), target, dim_size=nodes, reduce="sum")
    has_neighbour = (count > 0) & (mass > 0) & (labels >= 0)
    measures["same_label_share"] = (same_mass / mass.clamp(min=1e-300), has_neighbour)
    measures["neighbour_homophily"] = (same_count / count.clamp(min=1), has_neighbour)
    return measures


def head_measures(
    edge_index: torch.Tensor, alpha: torch.Tensor, labels: torch.Tensor, nodes: int
) -> dict[str, float | None]:
    """The measures above for one head, averaged over the nodes each one counts."""
    measured = node_measures(edge_index, alpha, labels, nodes)
    return {name: _mean(values, keep) for name, (values, keep) in measured.items()}


def summarise(records: list[dict], edges: int, attend_to_self: bool) -> dict[str, Any]:
    """The stored format from one record per layer and head."""
    mean = {}
    for name in MEASURES:
        values = [r[name] for r in records if r[name] is not None]
        mean[name] = float(np.mean(values)) if values else None
    return {"edges": edges, "attend_to_self": attend_to_self, "heads": records, "mean": mean}


def attention_network(model: nn.Module, x: torch.Tensor) -> tuple[AttentionNetwork, torch.Tensor]:
    """The attention layers of a model of a kind that attends, in evaluation mode, and their
    input features (node ids looked up when the model starts from an embedding)."""
    model.eval()
    network, x = unwrap(model, x)
    return cast(AttentionNetwork, network), x


def attention_diagnostics(
    model: nn.Module,
    x: torch.Tensor,
    edge_index: torch.Tensor,
    labels: torch.Tensor,
    edge_attr: torch.Tensor | None = None,
    typed: Data | None = None,
) -> dict[str, Any]:
    """Diagnostics of a trained attention model (evaluation mode), in the stored format;
    `edge_attr` for a model that reads edge attributes, `typed` the loaded graph whose edge
    types (if any) the attention is grouped by."""
    network, x = attention_network(model, x)
    with torch.no_grad():
        _, edges, weights = network.run(x, edge_index, keep_attention=True, edge_attr=edge_attr)
    nodes = x.size(0)
    records = []
    types = None if typed is None else edge_types(typed, edges)
    shares = []
    for layer, alpha in enumerate(weights, start=1):
        for head in range(alpha.size(1)):
            measures = head_measures(edges, alpha[:, head], labels, nodes)
            records.append({"layer": layer, "head": head + 1, **measures})
            if types is not None:
                kinds = len(typed.edge_type_names)
                summed = TypeShares(kinds)
                summed.add(*node_type_shares(edges, alpha[:, head], types, kinds, nodes))
                shares.append(summed.record(layer, head + 1))
    summary = summarise(records, int(edges.size(1)), bool(network.attend_to_self))
    return with_type_shares(summary, typed, shares)


def with_type_shares(summary: dict, typed: Data | None, shares: list[dict]) -> dict[str, Any]:
    if shares:
        summary["edge_types"] = {"names": list(typed.edge_type_names), "heads": shares}
    return summary


@torch.no_grad()
def chunked_attention_diagnostics(
    model: nn.Module,
    x: torch.Tensor,
    edge_index: torch.Tensor,
    labels: torch.Tensor,
    edge_attr: torch.Tensor | None = None,
    typed: Data | None = None,
    chunk_nodes: int = CHUNK_NODES,
) -> dict[str, Any]:
    """The same diagnostics in bounded memory: each layer runs over chunks of target nodes
    (harness.training.inference), and the per-node values are summed chunk by chunk."""
    network, h = attention_network(model, x)
    nodes = h.size(0)
    edges, attributes = network.edges_of(edge_index, nodes, edge_attr)
    graph = ChunkedGraph(edges, attributes, nodes, chunk_nodes)
    types = None if typed is None else edge_types(typed, graph.edges)
    kinds = 0 if types is None else len(typed.edge_type_names)
    records, shares = [], []
    for layer in range(len(network.layers)):
        parts, sums, counts, by_type = [], {}, {}, {}
        for chunk in graph.chunks():
            out, alpha = network.attention_step(
                layer, h[chunk.local], chunk.edge_index, graph.chunk_weights(chunk)
            )
            parts.append(out[chunk.target_rows])
            for head in range(alpha.size(1)):
                measured = node_measures(
                    chunk.edge_index, alpha[:, head], labels[chunk.local], len(chunk.local)
                )
                for name, (values, keep) in measured.items():
                    kept = keep[chunk.target_rows]
                    picked = values[chunk.target_rows][kept]
                    sums[head, name] = sums.get((head, name), 0.0) + float(picked.sum())
                    counts[head, name] = counts.get((head, name), 0) + int(kept.sum())
                if types is not None:
                    local = types[chunk.edge_slice]
                    per_node = node_type_shares(
                        chunk.edge_index, alpha[:, head], local, kinds, len(chunk.local)
                    )
                    rows = chunk.target_rows
                    by_type.setdefault(head, TypeShares(kinds)).add(*(v[rows] for v in per_node))
        h = torch.cat(parts)
        for head in sorted({head for head, _ in sums}):
            averages = {
                name: sums[head, name] / counts[head, name] if counts[head, name] else None
                for name in MEASURES
            }
            records.append({"layer": layer + 1, "head": head + 1, **averages})
        shares += [by_type[head].record(layer + 1, head + 1) for head in sorted(by_type)]
    summary = summarise(records, int(edges.size(1)), bool(network.attend_to_self))
    return with_type_shares(summary, typed, shares)
