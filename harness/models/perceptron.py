"""Multi-layer perceptron that ignores edges: h' = W h + b per layer."""

from __future__ import annotations

from torch import nn

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import MLPOptions


def build(options: MLPOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [nn.Linear(a, b) for a, b in widths(in_dim, options.hidden, out_dim, options.layers)]
    return LayerStack(layers, options.activation, options.dropout, uses_edges=False)
