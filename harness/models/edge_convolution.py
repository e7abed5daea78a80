"""Graph isomorphism convolution over edge attributes on PyG's GINEConv (Hu et al., 2020):
h_i' = MLP((1 + eps) h_i + sum_{j in N(i)} ReLU(h_j + W_e e_ji))

The MLP is Linear -> ReLU -> Linear (Xu et al., 2019); eps is 0 unless `learn_self_weight`.
W_e maps the edge attributes to the layer's input width. A graph without edge attributes gives
every edge the constant attribute 1, which makes the layer a GIN whose messages carry one
learned bias.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import GINEConv

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import EdgeConvolutionOptions


def perceptron(width: int, out: int) -> nn.Module:
    return nn.Sequential(nn.Linear(width, out), nn.ReLU(), nn.Linear(out, out))


class EdgeConvolutionStack(LayerStack):
    """Layers that read edge attributes on every edge: the constant 1 when a graph has none."""

    def edges_of(
        self, edge_index: torch.Tensor, nodes: int, edge_attr: torch.Tensor | None = None
    ) -> tuple[torch.Tensor, torch.Tensor]:
        if edge_attr is None:
            edge_attr = torch.ones(edge_index.size(1), self.edge_width)
        return edge_index, edge_attr


def build(
    options: EdgeConvolutionOptions, in_dim: int, out_dim: int, edge_width: int = 0
) -> nn.Module:
    # no attributes in the data: one constant column (a zero width would leave W_e unset)
    edge_width = edge_width or 1
    layers = [
        GINEConv(perceptron(a, b), train_eps=options.learn_self_weight, edge_dim=edge_width)
        for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    stack = EdgeConvolutionStack(layers, options.activation, options.dropout, uses_edges=True)
    stack.edge_width = edge_width
    return stack
