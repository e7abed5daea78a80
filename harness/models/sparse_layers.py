"""PyG's attention layers computed by the sparse kernel (harness.models.sparse_kernel), with the
layer's own parameters: the same outputs and gradients as the layer's forward on the same
edges, without its per-edge messages (tests/reference/test_sparse_attention.py).

The graph passed in holds every attention edge, self-loops included: the layer's own
`add_self_loops` is not applied here (the stack derives the edge set once per graph).
Edge attributes, when given, are in the graph's given edge order.

Static (GATConv, Velickovic et al., 2018): s_ij = LeakyReLU(a_s^T W h_j + a_t^T W h_i
    [+ a_e^T W_e e_ij]), messages W h_j.
Dynamic (GATv2Conv, Brody et al., 2022): s_ij = a^T LeakyReLU(W_s h_j + W_t h_i [+ W_e e_ij]),
    messages W_s h_j.
Scaled dot product (TransformerConv, Shi et al., 2021): s_ij = (W_q h_i)^T (W_k h_j [+ W_e e_ij])
    / sqrt(C), messages W_v h_j [+ W_e e_ij].
A new kind registers its layer class in SPARSE_FORWARDS.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import torch
from torch import Tensor, nn
from torch.nn import functional
from torch_geometric.nn import GATConv, GATv2Conv, TransformerConv

from harness.models.sparse_dynamic import dynamic_scores
from harness.models.sparse_fused import dynamic_attention_kernel
from harness.models.sparse_kernel import (
    TargetGraph,
    aggregate,
    at_sources,
    at_targets,
    pair_scores,
    segment_softmax,
    segment_sum,
)
from harness.models.sparse_native import native
from harness.models.sparse_static import static_attention_kernel


def by_head(layer: nn.Module, linear: nn.Module, x: Tensor) -> Tensor:
    """A linear map of the nodes, split by head: [N, H, C]."""
    return linear(x).view(-1, layer.heads, layer.out_channels)


def edge_features(layer: nn.Module, edge_attr: Tensor | None, graph: TargetGraph) -> Tensor | None:
    """The layer's edge projection W_e e_ij [E, H, C] in target order, or None."""
    if edge_attr is None or getattr(layer, "lin_edge", None) is None:
        return None
    edge_attr = edge_attr.view(-1, 1) if edge_attr.dim() == 1 else edge_attr
    projected = layer.lin_edge(edge_attr.index_select(0, graph.order))
    return projected.view(-1, layer.heads, layer.out_channels)


def weigh(layer: nn.Module, scores: Tensor, graph: TargetGraph) -> Tensor:
    """Softmax over each target's in-edges, then the layer's attention dropout."""
    weights = segment_softmax(scores, graph)
    return functional.dropout(weights, p=layer.dropout, training=layer.training)


def merge_heads(layer: nn.Module, out: Tensor) -> Tensor:
    """Concatenated heads [N, H * C] or their mean [N, C]."""
    return out.reshape(out.size(0), -1) if layer.concat else out.mean(dim=1)


def finish(layer: nn.Module, out: Tensor, x: Tensor) -> Tensor:
    """GAT and GATv2: merged heads, plus the residual map of the input, plus the bias."""
    out = merge_heads(layer, out)
    if layer.res is not None:
        out = out + layer.res(x)
    return out if layer.bias is None else out + layer.bias


def pair_sum(
    from_source: Tensor, at_target: Tensor, graph: TargetGraph, edge_part: Tensor | None
) -> Tensor:
    """Per edge j -> i: the source's part plus the target's, plus the edge's own if any."""
    total = at_sources(from_source, graph) + at_targets(at_target, graph)
    return total if edge_part is None else total + edge_part


def dropout_mask(layer: nn.Module, x: Tensor, graph: TargetGraph) -> Tensor | None:
    """The attention dropout mask [H, E] (0 or 1 / (1 - p)), drawn as `weigh` draws it; None
    when nothing drops."""
    if not (layer.training and layer.dropout > 0):
        return None
    return functional.dropout(x.new_ones(layer.heads, graph.edges), layer.dropout)


def static_attention(
    layer: GATConv, x: Tensor, graph: TargetGraph, edge_attr: Tensor | None = None
) -> Tensor:
    projected = by_head(layer, layer.lin, x)
    from_source = (projected * layer.att_src).sum(-1)
    at_target = (projected * layer.att_dst).sum(-1)
    edges = edge_features(layer, edge_attr, graph)
    if edges is None:  # scores from node parts only: the kernel's own backward
        keep, slope = dropout_mask(layer, x, graph), layer.negative_slope
        out = static_attention_kernel(from_source, at_target, projected, graph, slope, keep)
        return finish(layer, out, x)
    scores = pair_sum(from_source, at_target, graph, (edges * layer.att_edge).sum(-1).t())
    scores = functional.leaky_relu(scores, layer.negative_slope)
    return finish(layer, aggregate(weigh(layer, scores, graph), projected, graph), x)


def dynamic_attention(
    layer: GATv2Conv, x: Tensor, graph: TargetGraph, edge_attr: Tensor | None = None
) -> Tensor:
    source = by_head(layer, layer.lin_l, x)
    target = source if layer.share_weights else by_head(layer, layer.lin_r, x)
    edges = edge_features(layer, edge_attr, graph)
    if native(source, target, edges):  # scores, softmax and messages in one C pass
        keep = dropout_mask(layer, x, graph)
        slope = layer.negative_slope
        out = dynamic_attention_kernel(source, target, layer.att, edges, keep, graph, slope)
        return finish(layer, out, x)
    if torch.compiler.is_compiling():  # the compiler fuses the plain form into one loop
        hidden = pair_sum(source, target, graph, edges)
        scores = (functional.leaky_relu(hidden, layer.negative_slope) * layer.att).sum(-1).t()
    else:
        scores = dynamic_scores(source, target, layer.att, edges, graph, layer.negative_slope)
    return finish(layer, aggregate(weigh(layer, scores, graph), source, graph), x)


def dot_product_attention(
    layer: TransformerConv, x: Tensor, graph: TargetGraph, edge_attr: Tensor | None = None
) -> Tensor:
    query, key = by_head(layer, layer.lin_query, x), by_head(layer, layer.lin_key, x)
    value = by_head(layer, layer.lin_value, x)
    scores = pair_scores(query, key, graph)
    edges = edge_features(layer, edge_attr, graph)
    if edges is not None:  # <q_i, k_j + e_ij> = <q_i, k_j> + <q_i, e_ij>
        scores = scores + (at_targets(query, graph) * edges).sum(-1).t()
    weights = weigh(layer, scores / math.sqrt(layer.out_channels), graph)
    out = aggregate(weights, value, graph)
    if edges is not None:  # messages v_j + e_ij: the edge part summed per target
        out = out + segment_sum(weights.t().unsqueeze(-1) * edges, graph, axis=0)
    out = merge_heads(layer, out)
    if not layer.root_weight:
        return out
    skip = layer.lin_skip(x)
    if layer.lin_beta is None:
        return out + skip
    beta = layer.lin_beta(torch.cat([out, skip, out - skip], dim=-1)).sigmoid()
    return beta * skip + (1 - beta) * out


SparseForward = Callable[..., Tensor]
SPARSE_FORWARDS: dict[type, SparseForward] = {
    GATConv: static_attention,
    GATv2Conv: dynamic_attention,
    TransformerConv: dot_product_attention,
}


def sparse_forward(
    layer: nn.Module, x: Tensor, graph: TargetGraph, edge_attr: Tensor | None = None
) -> Tensor:
    """The layer's output on the graph's edges, computed by the sparse kernel."""
    for layer_class, forward in SPARSE_FORWARDS.items():
        if isinstance(layer, layer_class):
            return forward(layer, x, graph, edge_attr)
    raise TypeError(f"no sparse kernel for {type(layer).__name__}")
