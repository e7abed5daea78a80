"""Graph convolution on PyG's GCNConv (Kipf and Welling, 2017):
H' = D^{-1/2} (A + I) D^{-1/2} H W

The weights D^{-1/2} (A + I) D^{-1/2} depend on the graph alone: they are computed once per
graph with PyG's own `gcn_norm`, with the arguments GCNConv would pass, and every layer takes
them (GCNConv with normalize=False), instead of each layer recomputing them on every call.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import GCNConv
from torch_geometric.nn.conv.gcn_conv import gcn_norm

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import ConvolutionOptions


def normalised_edges(
    edge_index: torch.Tensor, nodes: int, dtype: torch.dtype
) -> tuple[torch.Tensor, torch.Tensor]:
    """Edges with self-loops and their symmetric-normalisation weights, as GCNConv makes them."""
    return gcn_norm(edge_index, None, nodes, False, True, "source_to_target", dtype)


def build(options: ConvolutionOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [
        GCNConv(a, b, normalize=False)
        for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    return LayerStack(layers, options.activation, options.dropout, normalised_edges)
