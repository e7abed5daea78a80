"""Mean-aggregation neighbourhood model on PyG's SAGEConv (Hamilton et al., 2017):
h_i' = W_1 h_i + W_2 mean_{j in N(i)} h_j
"""

from __future__ import annotations

from torch import nn
from torch_geometric.nn import SAGEConv

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import NeighbourMeanOptions


def build(options: NeighbourMeanOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [
        SAGEConv(a, b, aggr="mean")
        for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    return LayerStack(layers, options.activation, options.dropout, uses_edges=True)
