"""Graph attention contenders on PyG's GATConv and GATv2Conv.

Static attention (Velickovic et al., 2018):
    e_ij = LeakyReLU(a^T [W h_i || W h_j]),  alpha_ij = softmax_{j in N(i) + i}(e_ij),
    h_i' = ||_{k=1..K} sigma(sum_j alpha_ij^k W^k h_j)     (hidden layers: heads concatenated)
    h_i' = 1/K sum_k sum_j alpha_ij^k W^k h_j              (output layer: heads averaged)
Dynamic attention (Brody et al., 2022): e_ij = a^T LeakyReLU(W [h_i || h_j]).
"""

from __future__ import annotations

from torch import nn
from torch_geometric.nn import GATConv, GATv2Conv

from harness.models.stack import LayerStack
from harness.schema.contenders import AttentionOptions

LAYER_CLASSES = {"gat": GATConv, "gatv2": GATv2Conv}


def build(options: AttentionOptions, in_dim: int, out_dim: int) -> nn.Module:
    layer_class = LAYER_CLASSES[options.model]
    layers: list[nn.Module] = []
    width = in_dim
    for index in range(options.layers):
        last = index == options.layers - 1
        out = out_dim if last else options.hidden
        layers.append(
            layer_class(
                width,
                out,
                heads=options.heads,
                concat=not last,
                dropout=options.attention_dropout,
            )
        )
        width = out * options.heads
    return LayerStack(layers, options.activation, options.dropout, uses_edges=True)
