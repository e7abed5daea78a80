"""Dynamic attention scores (GATv2, Brody et al., 2022) for the sparse kernel, a block of edges
at a time: s_ij = a^T LeakyReLU(x_s[j] + x_t[i] [+ e_ij]) per head.

The vectors x_s[j] + x_t[i] are C wide per edge and head; formed for all edges at once they
make several passes over edges x heads x C floats through memory, forward and backward (and
autograd keeps them). Here each block of edges is formed, used and dropped while it is still
in cache, and the backward pass forms it again:
    g_h = g_s a * LeakyReLU'(h),  g_x_s[j] += g_h,  g_x_t[i] += g_h,  g_a += sum g_s LeakyReLU(h)
This is the path for dtypes other than float32, or where no C compiler is found; float32
otherwise takes the C loops (harness.models.sparse_fused). Compiled code without them takes
the plain form (harness.models.sparse_layers), which the compiler fuses into one loop by itself.
"""

from __future__ import annotations

import torch
from torch import Tensor
from torch.nn import functional

from harness.models.sparse_kernel import TargetGraph

EDGES_PER_BLOCK = 16_384  # 8 heads x 8 wide: 4 MiB per block tensor, within a core's cache


def blocks(graph: TargetGraph) -> list[slice]:
    return [
        slice(start, min(start + EDGES_PER_BLOCK, graph.edges))
        for start in range(0, graph.edges, EDGES_PER_BLOCK)
    ]


def hidden_block(inputs: tuple, graph: TargetGraph, block: slice) -> Tensor:
    """x_s[j] + x_t[i] (+ e_ij) for the edges of one block: [edges, H, C]."""
    source, target, edge_part = inputs
    hidden = source.index_select(0, graph.source_index[block])
    hidden += target.index_select(0, graph.target_index[block])
    return hidden if edge_part is None else hidden.add_(edge_part[block])


class DynamicScores(torch.autograd.Function):
    """Scores [H, E] from x_s, x_t [N, H, C], a [1, H, C] and edge parts [E, H, C] or None."""

    @staticmethod
    def forward(  # noqa: ANN001
        ctx, source: Tensor, target: Tensor, att: Tensor, edge_part, graph, slope
    ) -> Tensor:
        inputs = (source, target, edge_part)
        scores = source.new_empty(graph.edges, source.size(1))
        for block in blocks(graph):
            hidden = functional.leaky_relu(hidden_block(inputs, graph, block), slope)
            scores[block] = (hidden * att).sum(-1)
        ctx.graph, ctx.slope = graph, slope
        ctx.save_for_backward(source, target, att, edge_part)
        return scores.t()

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple:  # noqa: ANN001
        source, target, att, edge_part = ctx.saved_tensors
        inputs, graph, by_edge = (source, target, edge_part), ctx.graph, grad.t()
        grad_source, grad_target = torch.zeros_like(source), torch.zeros_like(target)
        grad_att = torch.zeros_like(att)
        grad_edge = None if edge_part is None else torch.empty_like(edge_part)
        for block in blocks(graph):
            hidden = hidden_block(inputs, graph, block)
            weight = by_edge[block].unsqueeze(-1)
            grad_att += (functional.leaky_relu(hidden, ctx.slope) * weight).sum(0, keepdim=True)
            grad_hidden = torch.where(hidden > 0, weight, weight * ctx.slope).mul_(att)
            grad_source.index_add_(0, graph.source_index[block], grad_hidden)
            grad_target.index_add_(0, graph.target_index[block], grad_hidden)
            if grad_edge is not None:
                grad_edge[block] = grad_hidden
        return grad_source, grad_target, grad_att, grad_edge, None, None


@torch.compiler.disable  # the compiled path fuses the plain form instead
def dynamic_scores(*inputs: Tensor | TargetGraph | float | None) -> Tensor:
    """DynamicScores on (source, target, att, edge_part, graph, slope)."""
    return DynamicScores.apply(*inputs)
