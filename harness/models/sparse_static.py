"""Static attention (GAT) in one function of the sparse kernel, its backward without any
per-edge product of node vectors.

Scores s_ij = LeakyReLU(u_j + t_i) from a source part u and a target part t per head
(Velickovic et al., 2018: u = a_s^T W h_j, t = a_t^T W h_i); alpha = softmax over i's in-edges;
dropped-out weights w_ij = alpha_ij k_ij (k: the dropout mask over 1 - p, or 1);
out_i = sum_j w_ij v_j. With g the output gradient, c_i = <g_i, out_i>, l_ij the LeakyReLU
slope at s_ij, B = alpha * l and B~ = w * l (CSR matrices per head):
    g_v = W^T g
    g_u_j = sum_i l_ij alpha_ij (k_ij <g_i, v_j> - c_i) = <v_j, (B~^T g)_j> - (B^T c)_j
    g_t_i = sum_j l_ij alpha_ij (k_ij <g_i, v_j> - c_i) = <g_i, (B~ v)_i> - c_i (B 1)_i
so the weight gradient <g_i, v_j> on every edge (a sampled product, the costliest step of the
general kernel) is never formed: only CSR products with the transpose and the matrix itself.
"""

from __future__ import annotations

import torch
from torch import Tensor
from torch.nn import functional

from harness.models.sparse_kernel import (
    TargetGraph,
    csr_products,
    repeat_to_edges,
    segment_sum,
)
from harness.models.sparse_native import native, static_exponentials

# below this a target's sum of exponentials (shifted by the global bound) has left float32's
# normal range or nearly: the exact per-target maxima are taken instead
SMALLEST_SUM = 1e-30


def exponentials(scores: Tensor, bound: Tensor, graph: TargetGraph) -> tuple[Tensor, Tensor]:
    """exp(s_ij - m) and their sum per target [H, N], with m the bound per head (softmax does
    not change under a shift); where a target's scores all lie far below it, the exact
    maximum of each target's scores instead (as PyG's softmax)."""
    powers = (scores - bound.unsqueeze(1)).exp_()
    sums = segment_sum(powers, graph)
    if far_below(sums, graph):
        offsets = graph.offsets.expand(scores.size(0), -1)
        top = torch.segment_reduce(scores, "max", offsets=offsets, axis=1, unsafe=True)
        powers = (scores - repeat_to_edges(top, graph)).exp_()
        sums = segment_sum(powers, graph)
    return powers, sums


def far_below(sums: Tensor, graph: TargetGraph) -> bool:
    """Whether some target's sum has left float32's normal range (see SMALLEST_SUM)."""
    return bool((sums[:, graph.degree > 0] < SMALLEST_SUM).any())


def scores_and_sums(
    source: Tensor, target: Tensor, graph: TargetGraph, slope: float
) -> tuple[Tensor, Tensor, Tensor]:
    """(exp(s_ij - m) [H, E], s_ij > 0 before the LeakyReLU [H, E], sums per target [H, N])
    from the score parts u, t [H, N]: in one pass of the C loops over each target's in-edges
    where they are built (float32), else from torch's operators."""
    bound = functional.leaky_relu(source.amax(1) + target.amax(1), slope)
    if native(source, target, bound):
        powers, positive, sums = static_exponentials(
            graph.offsets, graph.source_index, source, target, bound, slope
        )
        if not far_below(sums, graph):
            return powers, positive, sums
    before = source.index_select(1, graph.source_index)
    before.add_(repeat_to_edges(target, graph))
    powers, sums = exponentials(functional.leaky_relu(before, slope), bound, graph)
    return powers, before > 0, sums


class StaticAttention(torch.autograd.Function):
    """out [N, H, C] from the source and target score parts [N, H] and values [N, H, C].

    The softmax is normalised per target after the products (alpha_ij = e_ij / d_i, with
    e_ij = exp(s_ij - m) and d_i their sum), so no edge-wise division or per-target maximum
    is needed: m = LeakyReLU(max u + max t) bounds every score (LeakyReLU is increasing).
    """

    @staticmethod
    def forward(  # noqa: ANN001
        ctx,
        from_source: Tensor,
        at_target: Tensor,
        values: Tensor,
        graph: TargetGraph,
        slope: float,
        keep: Tensor | None,
    ) -> Tensor:
        source, target = from_source.t().contiguous(), at_target.t().contiguous()
        powers, positive, sums = scores_and_sums(source, target, graph, slope)
        inverse = torch.where(sums > 0, 1 / sums, 0.0).t().unsqueeze(-1)  # 1 / d_i [N, H, 1]
        weights = powers if keep is None else powers * keep
        out = csr_products(weights, values, graph, transposed=False) * inverse
        ctx.graph, ctx.slope, ctx.dropped = graph, slope, keep is not None
        ctx.save_for_backward(powers, weights, positive, values, out, inverse)
        return out

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple:  # noqa: ANN001
        powers, weights, positive, values, out, inverse = ctx.saved_tensors
        graph = ctx.graph
        grad = grad.contiguous()
        centre = (grad * out).sum(-1, keepdim=True)  # c_i [N, H, 1]
        scaled = torch.cat([grad, centre], dim=-1) * inverse  # [g_i | c_i] / d_i
        slopes = torch.where(positive, 1.0, ctx.slope)
        plain = powers * slopes  # B d_i
        dropped = weights * slopes if ctx.dropped else plain  # B~ d_i
        back_plain = csr_products(plain, scaled, graph, transposed=True)
        grad_values = csr_products(weights, scaled[..., :-1], graph, transposed=True)
        if ctx.dropped:
            back_dropped = csr_products(dropped, scaled[..., :-1], graph, transposed=True)
        else:
            back_dropped = back_plain[..., :-1]
        grad_source = (values * back_dropped).sum(-1) - back_plain[..., -1]
        ahead = csr_products(dropped, values, graph, transposed=False)
        row_sums = segment_sum(plain, graph).t().unsqueeze(-1)  # (B 1)_i d_i
        grad_target = ((grad * ahead).sum(-1, keepdim=True) - centre * row_sums) * inverse
        return grad_source, grad_target.squeeze(-1), grad_values, None, None, None


@torch.compiler.disable  # CSR tensors are not traced; see harness.models.sparse_kernel
def static_attention_kernel(*inputs: Tensor | TargetGraph | float | None) -> Tensor:
    """StaticAttention on (from_source, at_target, values, graph, slope, keep)."""
    return StaticAttention.apply(*inputs)
