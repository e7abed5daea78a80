"""Local message passing plus attention over all nodes, on PyG's GPSConv (Rampasek et al.,
2022, eq. 2-4, with batch normalisation as there):
    h_local  = BN(GINE(h, E) + h)              (Hu et al., 2020; edge attributes, or 1)
    h_global = BN(Attention(h, h, h) + h)      (multi-head over all nodes, or performer)
    h'       = BN2(h_local + h_global + MLP(h_local + h_global))
`attention_kind = "performer"` replaces softmax attention by linear attention through random
features (Choromanski et al., 2021), whose memory grows with the nodes, not their square.
The input is mapped to `hidden` columns before the first layer, the last layer's output to the
classes after it. Every node reads every node of its graph: inference runs on the whole graph
(or, sampled, on each batch), never in chunks.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import GINEConv, GPSConv

from harness.models.edge_convolution import EdgeConvolutionStack, perceptron
from harness.schema.contenders import GlobalAttentionOptions


class GlobalLayer(nn.Module):
    """One GPS layer, with the input map in front of the first."""

    def __init__(self, layer: GPSConv, entry: nn.Module | None = None):
        super().__init__()
        self.layer = layer
        self.entry = entry

    def reset_parameters(self) -> None:
        self.layer.reset_parameters()
        if self.entry is not None:
            self.entry.reset_parameters()

    def forward(
        self, x: torch.Tensor, edge_index: torch.Tensor, edge_attr: torch.Tensor
    ) -> torch.Tensor:
        x = x if self.entry is None else self.entry(x)
        return self.layer(x, edge_index, edge_attr=edge_attr)


class GlobalAttentionStack(EdgeConvolutionStack):
    """GPS layers over edges with attributes (the constant 1 without), then the output map."""

    def __init__(self, layers: list[nn.Module], options: GlobalAttentionOptions, out_dim: int):
        super().__init__(layers, options.activation, options.dropout, uses_edges=True)
        self.exit = nn.Linear(options.hidden, out_dim)
        self.whole_graph = True

    def reset_parameters(self) -> None:
        super().reset_parameters()
        self.exit.reset_parameters()

    def finish(self, x: torch.Tensor) -> torch.Tensor:
        return self.exit(x)


def build(
    options: GlobalAttentionOptions, in_dim: int, out_dim: int, edge_width: int = 0
) -> nn.Module:
    width, edge_width = options.hidden, edge_width or 1
    layers = []
    for index in range(options.layers):
        local = GINEConv(perceptron(width, width), edge_dim=edge_width)
        layer = GPSConv(
            width,
            local,
            heads=options.heads,
            dropout=options.attention_dropout,
            attn_type=options.attention_kind,
        )
        layers.append(GlobalLayer(layer, nn.Linear(in_dim, width) if index == 0 else None))
    stack = GlobalAttentionStack(layers, options, out_dim)
    stack.edge_width = edge_width
    return stack
