"""Which relations does attention listen to? For a graph with typed edges, the share of each
node's attention that goes to each edge type, against that type's share of the node's edges
(what uniform attention would give), per layer and head.

For node i with typed in-edges T(i) (self-loops and hop edges beyond the graph's own are left
out), alpha_ij its weights and t(j, i) the type of edge (j, i):
    attention_share_t = mean_i sum_{j in T(i), t(j,i) = t} alpha_ij / sum_{j in T(i)} alpha_ij
    edge_share_t      = mean_i |{j in T(i): t(j,i) = t}| / |T(i)|
A ratio attention_share_t / edge_share_t above 1: attention favours type t beyond its count.
Stored in `extras["attention"]["edge_types"]`:
    {"names": [...], "heads": [{"layer": 1, "head": 1, "attention_share": [...],
                                "edge_share": [...]}, ...]}
"""

from __future__ import annotations

from typing import Any

import torch
from torch_geometric.utils import scatter


def node_type_shares(
    edge_index: torch.Tensor, alpha: torch.Tensor, types: torch.Tensor, kinds: int, nodes: int
) -> tuple[torch.Tensor, torch.Tensor, torch.Tensor]:
    """Per target node: attention share [nodes, kinds], edge share [nodes, kinds], and whether
    the node has a typed in-edge."""
    typed = types >= 0
    target, kind = edge_index[1][typed], types[typed]
    weight = alpha[typed].double()
    one_hot = torch.nn.functional.one_hot(kind, kinds).double()
    mass = scatter(weight[:, None] * one_hot, target, 0, dim_size=nodes, reduce="sum")
    count = scatter(one_hot, target, 0, dim_size=nodes, reduce="sum")
    total_mass, total_count = mass.sum(1, keepdim=True), count.sum(1, keepdim=True)
    has = total_count[:, 0] > 0
    return mass / total_mass.clamp(min=1e-300), count / total_count.clamp(min=1), has


class TypeShares:
    """Sums of the per-node shares of one layer and head, over nodes (or chunks of them)."""

    def __init__(self, kinds: int):
        self.attention = torch.zeros(kinds, dtype=torch.float64)
        self.edges = torch.zeros(kinds, dtype=torch.float64)
        self.nodes = 0

    def add(self, attention: torch.Tensor, edges: torch.Tensor, has: torch.Tensor) -> None:
        self.attention += attention[has].sum(0)
        self.edges += edges[has].sum(0)
        self.nodes += int(has.sum())

    def record(self, layer: int, head: int) -> dict[str, Any]:
        count = max(self.nodes, 1)
        return {
            "layer": layer,
            "head": head,
            "attention_share": [round(float(v) / count, 6) for v in self.attention],
            "edge_share": [round(float(v) / count, 6) for v in self.edges],
        }
