"""Graph isomorphism network on PyG's GINConv (Xu et al., 2019, eq. 4.1):
h_v' = MLP((1 + eps) h_v + sum_{u in N(v)} h_u)

As powerful as the Weisfeiler-Leman test at telling graphs apart, and the usual simpler
baseline of graph classification. Each layer's MLP has two linear maps with the contender's
activation between them; eps is 0 (GIN-0) or learned (GIN-eps).
"""

from __future__ import annotations

from torch import nn
from torch_geometric.nn import GINConv

from harness.models.stack import ACTIVATIONS, LayerStack, widths
from harness.schema.contenders import IsomorphismOptions


def build(options: IsomorphismOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [
        GINConv(
            nn.Sequential(nn.Linear(a, b), ACTIVATIONS[options.activation](), nn.Linear(b, b)),
            train_eps=options.learn_self_weight,
        )
        for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    return LayerStack(layers, options.activation, options.dropout, uses_edges=True)
