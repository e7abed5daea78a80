"""Graph convolution on PyG's GCNConv (Kipf and Welling, 2017):
H' = D^{-1/2} (A + I) D^{-1/2} H W

The normalised weights w_ij = 1 / sqrt(d_i d_j) (d counting the self-loop) are computed once
per forward pass with PyG's gcn_norm, as GCNConv would in each layer. A neighbour-sampled batch
brings its own weights (`sampled_weights`): the full graph's degrees, and each sampled edge
scaled by deg_i / drawn_i so the sum over the drawn neighbours estimates the full sum without
bias (Chen, Zhu and Song, 2018, section 3); with every neighbour drawn it is the exact sum.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import GCNConv
from torch_geometric.nn.conv.gcn_conv import gcn_norm

from harness.models.stack import LayerStack, widths
from harness.schema.contenders import ConvolutionOptions


class ConvolutionStack(LayerStack):
    """Layers that take normalised edge weights instead of normalising on their own."""

    def message_edges(
        self, edge_index: torch.Tensor, nodes: int
    ) -> tuple[torch.Tensor, torch.Tensor | None]:
        return gcn_norm(edge_index, None, nodes, False, True, "source_to_target", torch.float32)

    def batch_edges(
        self, edge_index: torch.Tensor, degree: torch.Tensor
    ) -> tuple[torch.Tensor, torch.Tensor | None]:
        return sampled_weights(edge_index, degree)


def sampled_weights(
    edge_index: torch.Tensor, degree: torch.Tensor
) -> tuple[torch.Tensor, torch.Tensor]:
    """Edges of a sampled batch with one self-loop per node, and their weights.

    `degree` holds each batch node's in-degree in the full graph (without self-loops).
    """
    nodes = len(degree)
    source, target = edge_index
    full = degree.to(torch.float32) + 1  # with the self-loop
    drawn = torch.bincount(target, minlength=nodes).clamp(min=1).to(torch.float32)
    scale = degree.to(torch.float32)[target] / drawn[target]
    weights = full[source].rsqrt() * full[target].rsqrt() * scale
    loops = torch.arange(nodes)
    edges = torch.cat([edge_index, torch.stack([loops, loops])], dim=1)
    return edges, torch.cat([weights, full.reciprocal()])


def build(options: ConvolutionOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [
        GCNConv(a, b, normalize=False)
        for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    return ConvolutionStack(layers, options.activation, options.dropout, uses_edges=True)
