"""Graph convolution on PyG's GCNConv (Kipf and Welling, 2017):
H' = D^{-1/2} (A + I) D^{-1/2} H W
"""

from __future__ import annotations

from torch import nn
from torch_geometric.nn import GCNConv

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import ConvolutionOptions


def build(options: ConvolutionOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [GCNConv(a, b) for a, b in widths(in_dim, options.hidden, out_dim, options.layers)]
    return LayerStack(layers, options.activation, options.dropout, uses_edges=True)
