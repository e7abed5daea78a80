"""GATv2 attention (Brody et al., 2022) in one pass over each target's in-edges: a small C loop
(sparse_loops.c, built and threaded by harness.models.sparse_native), called through ctypes.

Per target i and head, over its in-edges j -> i in target order:
    s_ij = a^T LeakyReLU(h_ij),  h_ij = x_s[j] + x_t[i] [+ e_ij]
    alpha_ij = exp(s_ij - m_i) / sum_k exp(s_ik - m_i),  m_i = max_k s_ik
    out_i = sum_j alpha_ij keep_ij x_s[j]              (keep: the attention dropout mask, or 1)
Each h_ij is formed, used and dropped in registers; the source rows read for the scores are
read again for the messages while still in cache. Backward, per target, with g the output
gradient: g_w_ij = <g_i, x_s[j]>, g_s = alpha (keep g_w - sum_k alpha_ik keep_ik g_w_ik),
    g_h = g_s a LeakyReLU'(h),  g_x_s[j] += alpha keep g_i + g_h,  g_x_t[i] += g_h,
    g_a += g_s LeakyReLU(h),  g_e_ij = g_h
forming h again. Torch's own operators need several passes over edges x heads x C floats for
the same work (harness.models.sparse_dynamic and the general kernel: the path taken for other
dtypes or where no compiler is found).

Threads (harness.models.sparse_native): each range of targets writes its own targets' rows;
sources are shared, so each range after the first sums g_x_s into a buffer of its own, added up
at the end.
"""

from __future__ import annotations

import ctypes

import torch
from torch import Tensor

from harness.models.sparse_kernel import TargetGraph
from harness.models.sparse_native import (
    BUFFERED_RANGES,
    integers,
    library,
    pointer,
    ranges,
    run_parts,
    sum_into_first,
)


class Inputs(ctypes.Structure):
    """The C loops' read-only inputs (struct Inputs in sparse_loops.c)."""

    _fields_ = [
        *((name, ctypes.c_void_p) for name in ("source", "target", "att", "edge_part", "keep")),
        ("offsets", ctypes.c_void_p),
        ("sources", ctypes.c_void_p),
        ("heads", ctypes.c_int64),
        ("width", ctypes.c_int64),
        ("slope", ctypes.c_float),
    ]


def c_inputs(inputs: tuple, graph: TargetGraph, slope: float) -> Inputs:
    source, target, att, edge_part, keep = inputs
    pointers = [pointer(t) for t in (source, target, att, edge_part, keep)]
    pointers += [pointer(graph.offsets), pointer(graph.source_index)]
    return Inputs(*pointers, source.size(1), source.size(2), slope)


def fused_forward(inputs: tuple, graph: TargetGraph, slope: float) -> tuple[Tensor, Tensor]:
    """(alpha [E, H], out [N, H, C]) from contiguous float32 (x_s, x_t, a, edge part or None,
    dropout mask [E, H] or None)."""
    source = inputs[0]
    alpha, out = source.new_empty(graph.edges, source.size(1)), torch.empty_like(source)
    run, arguments = (
        library().dynamic_attention_forward,
        ctypes.byref(c_inputs(inputs, graph, slope)),
    )

    def call(part: int, first: int, last: int) -> None:
        run(arguments, *integers(first, last), pointer(alpha), pointer(out))

    run_parts(call, ranges(graph.offsets, torch.get_num_threads()))
    return alpha, out


def fused_backward(
    inputs: tuple, graph: TargetGraph, slope: float, alpha: Tensor, grad: Tensor
) -> tuple[Tensor, Tensor, Tensor, Tensor | None]:
    """(g_x_s, g_x_t, g_a, g_edge or None) from the output gradient [N, H, C]."""
    source, target, att, edge_part, _ = inputs
    parts = ranges(graph.offsets, min(torch.get_num_threads(), BUFFERED_RANGES))
    grad_sources = [torch.zeros_like(source) for _ in range(max(1, len(parts)))]
    grad_target, grad_atts = torch.zeros_like(target), att.new_zeros(len(parts) + 1, *att.shape)
    grad_edge = None if edge_part is None else torch.empty_like(edge_part)
    run, arguments = (
        library().dynamic_attention_backward,
        ctypes.byref(c_inputs(inputs, graph, slope)),
    )

    def call(part: int, first: int, last: int) -> None:
        run(arguments, *integers(first, last), pointer(alpha),
            pointer(grad), pointer(grad_sources[part]), pointer(grad_target),
            pointer(grad_atts[part]), pointer(grad_edge))  # fmt: skip

    run_parts(call, parts)
    return sum_into_first(grad_sources), grad_target, grad_atts.sum(0), grad_edge


class DynamicAttention(torch.autograd.Function):
    """out [N, H, C] from x_s, x_t [N, H, C], a [1, H, C], edge parts [E, H, C] or None and a
    dropout mask [H, E] or None."""

    @staticmethod
    def forward(ctx, source, target, att, edge_part, keep, graph, slope) -> Tensor:  # noqa: ANN001
        keep = None if keep is None else keep.t()
        inputs = tuple(
            t if t is None else t.contiguous() for t in (source, target, att, edge_part, keep)
        )
        alpha, out = fused_forward(inputs, graph, slope)
        ctx.graph, ctx.slope = graph, slope
        ctx.save_for_backward(*inputs, alpha)
        return out

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple:  # noqa: ANN001
        *inputs, alpha = ctx.saved_tensors
        grads = fused_backward(tuple(inputs), ctx.graph, ctx.slope, alpha, grad.contiguous())
        return (*grads, None, None, None)


@torch.compiler.disable  # C loops: compiled code calls them as they are
def dynamic_attention_kernel(*inputs: Tensor | TargetGraph | float | None) -> Tensor:
    """DynamicAttention on (source, target, att, edge_part, keep, graph, slope)."""
    return DynamicAttention.apply(*inputs)
