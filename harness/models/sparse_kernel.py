"""A sparse attention kernel: edges in target order (CSR) once per graph, softmax by segment
reductions, and aggregation by CSR matrix products with their own backward.

For target i with in-edges j -> i (Velickovic et al., 2018, eq. 2-4):
    alpha_ij = exp(s_ij - m_i) / sum_k exp(s_ik - m_i),  m_i = max_k s_ik   (segment softmax)
    out_i = sum_j alpha_ij v_j                                               (CSR product A v)
Per head, A is the N x N CSR matrix of the weights; its transpose (the same edges in source
order, also built once) gives the node gradient A^T g, and the weight gradient is the sampled
product <g_i, v_j> on the edges only. Autograd through a sparse CSR product would densify it
(N x N); these functions never do. Each function is a narrow piece (segment softmax, CSR
product, sampled product, per-target broadcast) that any attention kind composes with its own
scores, in plain autograd between them (harness.models.sparse_layers).

Edge-wise scores and weights are [heads, edges] in target order (each head's weights are one
CSR value array, no copies); node-wise tensors [nodes, heads(, width)] as PyG's layers have them.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import torch
from torch import Tensor

from harness.models.sparse_native import heads_product, heads_sampled, heads_scatter, native

BETA_WARNING = "Sparse CSR tensor support is in beta"


@dataclass(frozen=True)
class TargetGraph:
    """One graph's edges in target order (`pointer`, `sources`: CSR rows and columns), and in
    source order (`back_pointer`, `back_targets`: the transpose), built once per graph.

    `order[k]` is the given position of the k-th edge in target order (for per-edge inputs
    such as edge attributes, and to report weights in the given order); `back_order[k]` the
    target-order position of the k-th edge in source order. Indices are int32 where torch's CSR
    products take them (the MKL products are faster on them), int64 where torch and the C loops
    (harness.models.sparse_native) index.
    """

    nodes: int
    pointer: Tensor
    sources: Tensor
    source_index: Tensor
    target_index: Tensor
    degree: Tensor
    offsets: Tensor
    order: Tensor
    back_pointer: Tensor
    back_targets: Tensor
    back_order: Tensor

    @property
    def edges(self) -> int:
        return self.source_index.numel()

    def matrix(self, values: Tensor, transposed: bool = False) -> Tensor:
        """The N x N CSR matrix of one head's weights (in target order, or source order for
        the transpose)."""
        rows, columns = (
            (self.back_pointer, self.back_targets) if transposed else (self.pointer, self.sources)
        )
        with warnings.catch_warnings():  # torch marks CSR tensors as beta, once per process
            warnings.filterwarnings("ignore", message=BETA_WARNING)
            return torch.sparse_csr_tensor(
                rows, columns, values, (self.nodes, self.nodes), check_invariants=False
            )


def target_graph(edge_index: Tensor, nodes: int) -> TargetGraph:
    """Sort the edges [2, E] (sources, targets) by target, stably, and their transpose."""
    order = torch.argsort(edge_index[1], stable=True)
    sources, targets = edge_index[0, order], edge_index[1, order]
    back_order = torch.argsort(sources, stable=True)
    index = torch.int32 if max(nodes, sources.numel()) < 2**31 - 1 else torch.int64
    degree = torch.bincount(targets, minlength=nodes)
    offsets = torch.zeros(nodes + 1, dtype=torch.long)
    torch.cumsum(degree, 0, out=offsets[1:])
    back_offsets = torch.zeros(nodes + 1, dtype=torch.long)
    torch.cumsum(torch.bincount(sources, minlength=nodes), 0, out=back_offsets[1:])
    return TargetGraph(
        nodes=nodes,
        pointer=offsets.to(index),
        sources=sources.to(index),
        source_index=sources,
        target_index=targets,
        degree=degree,
        offsets=offsets,
        order=order,
        back_pointer=back_offsets.to(index),
        back_targets=targets[back_order].to(index),
        back_order=back_order,
    )


class TargetGraphs:
    """The target-order form of the last few edge tensors a model ran on (the training graph,
    the edges into the validation rows), keyed by the tensors themselves (held, so that no
    other tensor can take their address) and their in-place version counters."""

    def __init__(self, size: int = 4) -> None:
        self.size = size
        self.entries: list[tuple[Tensor, int, int, TargetGraph]] = []

    @torch.compiler.disable  # a lookup and a sort, not math to compile
    def get(self, edge_index: Tensor, nodes: int) -> TargetGraph:
        for entry in self.entries:
            if entry[0] is edge_index and entry[1:3] == (edge_index._version, nodes):
                return entry[3]
        graph = target_graph(edge_index, nodes)
        self.entries = [(edge_index, edge_index._version, nodes, graph), *self.entries]
        del self.entries[self.size :]
        return graph

    def __getstate__(self) -> dict:
        return {"size": self.size}  # a copied or pickled model sorts its edges afresh

    def __setstate__(self, state: dict) -> None:
        self.__init__(state["size"])


def segment_sum(edge_values: Tensor, graph: TargetGraph, axis: int = 1) -> Tensor:
    """Per target, the sum over its in-edges along `axis` ([H, E] -> [H, N] by default;
    [E, ...] -> [N, ...] with axis 0); 0 for a target without in-edges."""
    if graph.edges == 0:
        shape = list(edge_values.shape)
        shape[axis] = graph.nodes
        return edge_values.new_zeros(shape)
    offsets = graph.offsets.expand(*edge_values.shape[:axis], -1)
    return torch.segment_reduce(edge_values, "sum", offsets=offsets, axis=axis, unsafe=True)


def repeat_to_edges(node_values: Tensor, graph: TargetGraph) -> Tensor:
    """Each target's value once per in-edge, in target order: [H, N] -> [H, E]."""
    return node_values.index_select(1, graph.target_index)


def csr_products(weights: Tensor, dense: Tensor, graph: TargetGraph, transposed: bool) -> Tensor:
    """Per head h: A_h @ dense[:, h] (or A_h^T @ ...): weights [H, E], dense [N, H, C]."""
    if native(weights, dense):  # every head in one pass of the C loops
        if transposed:  # from each target to its sources, the edges still in target order
            return heads_scatter(graph.offsets, graph.source_index, weights, dense)
        return heads_product(graph.offsets, graph.source_index, weights, dense)
    if transposed:
        weights = weights.index_select(1, graph.back_order)
    products = [
        graph.matrix(weights[head], transposed) @ dense[:, head].contiguous()
        for head in range(weights.size(0))
    ]
    return torch.stack(products, dim=1)


def sampled_products(left: Tensor, right: Tensor, graph: TargetGraph) -> Tensor:
    """<left_i, right_j> on every edge j -> i, per head: [N, H, C] x [N, H, C] -> [H, E]."""
    if native(left, right):
        return heads_sampled(graph.offsets, graph.source_index, left, right)
    pattern = graph.matrix(left.new_zeros(graph.edges))  # beta = 0 still reads them: no NaN
    products = [
        torch.sparse.sampled_addmm(
            pattern, left[:, head].contiguous(), right[:, head].t().contiguous(), beta=0.0
        ).values()
        for head in range(left.size(1))
    ]
    return torch.stack(products)


def softmax_weights(scores: Tensor, graph: TargetGraph) -> Tensor:
    """Softmax of the scores [H, E] over each target's in-edges, shifted by the segment's
    maximum (as PyG's softmax) so that no exponential overflows."""
    scores = scores.contiguous()
    offsets = graph.offsets.expand(scores.size(0), -1)
    top = torch.segment_reduce(scores, "max", offsets=offsets, axis=1, unsafe=True)
    weights = (scores - repeat_to_edges(top, graph)).exp_()
    return weights.div_(repeat_to_edges(segment_sum(weights, graph), graph))


class SegmentSoftmax(torch.autograd.Function):
    """alpha = softmax of the scores [H, E] over each target's in-edges.
    Backward: g_s = alpha * (g_alpha - sum_k alpha_ik g_alpha_ik)."""

    @staticmethod
    def forward(ctx, scores: Tensor, graph: TargetGraph) -> Tensor:  # noqa: ANN001
        ctx.graph = graph
        if graph.edges == 0:
            ctx.save_for_backward(scores)
            return scores.clone()
        weights = softmax_weights(scores, graph)
        ctx.save_for_backward(weights)
        return weights

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple[Tensor, None]:  # noqa: ANN001
        (weights,) = ctx.saved_tensors
        centre = repeat_to_edges(segment_sum(weights * grad, ctx.graph), ctx.graph)
        return weights * (grad - centre), None


class Aggregate(torch.autograd.Function):
    """out_i = sum_j w_ij v_j per head: weights [H, E], values [N, H, C] -> [N, H, C].
    Backward: g_v = A^T g (CSR product on the transpose), g_w_ij = <g_i, v_j> (sampled)."""

    @staticmethod
    def forward(ctx, weights: Tensor, values: Tensor, graph: TargetGraph) -> Tensor:  # noqa: ANN001
        ctx.graph = graph
        ctx.save_for_backward(weights, values)
        return csr_products(weights, values, graph, transposed=False)

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple[Tensor | None, Tensor | None, None]:  # noqa: ANN001
        weights, values = ctx.saved_tensors
        grad_weights = grad_values = None
        if ctx.needs_input_grad[0]:
            grad_weights = sampled_products(grad, values, ctx.graph)
        if ctx.needs_input_grad[1]:
            grad_values = csr_products(weights, grad, ctx.graph, transposed=True)
        return grad_weights, grad_values, None


class PairScores(torch.autograd.Function):
    """s_ij = <q_i, k_j> per head on every edge: [N, H, C] x [N, H, C] -> [H, E].
    Backward: g_q = A_g k, g_k = A_g^T q, with A_g the CSR matrix of the score gradients."""

    @staticmethod
    def forward(ctx, query: Tensor, key: Tensor, graph: TargetGraph) -> Tensor:  # noqa: ANN001
        ctx.graph = graph
        ctx.save_for_backward(query, key)
        return sampled_products(query, key, graph)

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple[Tensor | None, Tensor | None, None]:  # noqa: ANN001
        query, key = ctx.saved_tensors
        grad_query = grad_key = None
        if ctx.needs_input_grad[0]:
            grad_query = csr_products(grad, key, ctx.graph, transposed=False)
        if ctx.needs_input_grad[1]:
            grad_key = csr_products(grad, query, ctx.graph, transposed=True)
        return grad_query, grad_key, None


class ToTargets(torch.autograd.Function):
    """A node-wise tensor at each edge's target: [N, H] -> [H, E] (scores), or
    [N, H, C] -> [E, H, C] (vectors); backward: a segment sum."""

    @staticmethod
    def forward(ctx, node_values: Tensor, graph: TargetGraph) -> Tensor:  # noqa: ANN001
        ctx.graph, ctx.scalar = graph, node_values.dim() == 2
        if ctx.scalar:
            return repeat_to_edges(node_values.t().contiguous(), graph)
        return node_values.index_select(0, graph.target_index)

    @staticmethod
    def backward(ctx, grad: Tensor) -> tuple[Tensor, None]:  # noqa: ANN001
        if ctx.scalar:
            return segment_sum(grad, ctx.graph).t(), None
        return segment_sum(grad, ctx.graph, axis=0), None


# The pieces run as they are inside compiled code too (graph breaks): dynamo cannot trace CSR
# tensors, and the element-wise steps between them are what the compiler can fuse.
@torch.compiler.disable
def segment_softmax(scores: Tensor, graph: TargetGraph) -> Tensor:
    return SegmentSoftmax.apply(scores, graph)


@torch.compiler.disable
def aggregate(weights: Tensor, values: Tensor, graph: TargetGraph) -> Tensor:
    return Aggregate.apply(weights, values, graph)


@torch.compiler.disable
def pair_scores(query: Tensor, key: Tensor, graph: TargetGraph) -> Tensor:
    return PairScores.apply(query, key, graph)


def at_targets(node_values: Tensor, graph: TargetGraph) -> Tensor:
    """Each edge's target value: [N, H] -> [H, E], or [N, H, C] -> [E, H, C]. Compiled, a
    plain gather, which the compiler fuses with the element-wise steps around it."""
    if torch.compiler.is_compiling():
        if node_values.dim() == 2:
            return node_values.t().index_select(1, graph.target_index)
        return node_values.index_select(0, graph.target_index)
    return ToTargets.apply(node_values, graph)


def at_sources(node_values: Tensor, graph: TargetGraph) -> Tensor:
    """Each edge's source value: [N, H] -> [H, E], or [N, H, C] -> [E, H, C] (autograd: a
    scatter-add back)."""
    if node_values.dim() == 2:
        return node_values.t().contiguous().index_select(1, graph.source_index)
    return node_values.index_select(0, graph.source_index)
