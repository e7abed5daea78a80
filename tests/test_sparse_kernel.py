"""The sparse kernel's pieces: the target-order graph and its transpose, the per-model cache,
and every custom backward (static attention's with and without a dropout mask) against finite
differences (torch.autograd.gradcheck, float64)."""

from __future__ import annotations

import copy

import pytest
import torch
from torch.autograd import gradcheck

from harness.models.sparse_kernel import (
    TargetGraphs,
    aggregate,
    at_sources,
    at_targets,
    pair_scores,
    segment_softmax,
    target_graph,
)
from harness.models.sparse_static import static_attention_kernel

NODES = 7
EDGES = torch.tensor([[1, 2, 0, 3, 3, 5, 1, 4, 6], [0, 0, 1, 1, 2, 2, 4, 4, 4]])[
    :, [4, 0, 8, 2, 6, 1, 3, 7, 5]
]


def test_edges_in_target_order_and_their_transpose():
    graph = target_graph(EDGES, NODES)
    targets = EDGES[1, graph.order]
    assert torch.equal(targets, torch.sort(EDGES[1], stable=True).values)
    assert torch.equal(graph.source_index, EDGES[0, graph.order])
    assert graph.pointer.tolist() == [0, 2, 4, 6, 6, 9, 9, 9]  # nodes 3, 5, 6: no in-edges
    sources_in_back_order = graph.source_index[graph.back_order]
    assert torch.equal(sources_in_back_order, torch.sort(graph.source_index).values)
    assert torch.equal(graph.back_targets.long(), targets[graph.back_order])
    dense = torch.zeros(NODES, NODES)
    dense[targets, graph.source_index] = torch.arange(1.0, 10.0)
    values = torch.arange(1.0, 10.0)
    assert torch.equal(graph.matrix(values).to_dense(), dense)
    assert torch.equal(
        graph.matrix(values[graph.back_order], transposed=True).to_dense(), dense.t()
    )


def test_every_backward_matches_finite_differences():
    graph = target_graph(EDGES, NODES)
    double = {"dtype": torch.float64, "requires_grad": True}
    scores = torch.randn(3, graph.edges, **double)
    values = torch.randn(NODES, 3, 2, **double)
    query, key = torch.randn(NODES, 3, 2, **double), torch.randn(NODES, 3, 2, **double)
    node_scores = torch.randn(NODES, 3, **double)
    assert gradcheck(lambda s: segment_softmax(s, graph), (scores,))
    assert gradcheck(lambda w, v: aggregate(w, v, graph), (scores, values))
    assert gradcheck(lambda q, k: pair_scores(q, k, graph), (query, key))
    assert gradcheck(lambda n: at_targets(n, graph), (node_scores,))
    assert gradcheck(lambda n: at_targets(n, graph), (values,))
    assert gradcheck(lambda n: at_sources(n, graph), (node_scores,))
    keep = (torch.rand(3, graph.edges) > 0.3).double() / 0.7  # a drawn dropout mask
    for mask in (None, keep):
        assert gradcheck(
            lambda u, t, v, mask=mask: static_attention_kernel(u, t, v, graph, 0.2, mask),
            (node_scores, torch.randn(NODES, 3, **double), values),
        )


def test_softmax_weights_sum_to_one_per_target_and_empty_targets_get_nothing():
    graph = target_graph(EDGES, NODES)
    weights = segment_softmax(torch.randn(2, graph.edges) * 30, graph)
    sums = torch.zeros(2, NODES).index_add_(1, EDGES[1, graph.order], weights)
    assert torch.allclose(sums[:, [0, 1, 2, 4]], torch.ones(2, 4))
    out = aggregate(weights, torch.randn(NODES, 2, 3), graph)
    assert torch.equal(out[[3, 5, 6]], torch.zeros(3, 2, 3))
    empty = target_graph(EDGES[:, :0], NODES)
    assert (
        aggregate(segment_softmax(torch.zeros(2, 0), empty), torch.ones(NODES, 2, 3), empty)
        .abs()
        .sum()
        == 0
    )


def test_graphs_are_kept_per_edge_tensor_and_rebuilt_after_a_change():
    graphs = TargetGraphs(size=2)
    first, second = EDGES.clone(), EDGES[:, :5].clone()
    built = graphs.get(first, NODES)
    assert graphs.get(second, NODES) is not built
    assert graphs.get(first, NODES) is built  # both kept: training graph and validation rows
    first[0, 0] = 6
    assert graphs.get(first, NODES) is not built
    assert copy.deepcopy(graphs).entries == []  # a copied model sorts its edges afresh


def test_static_attention_falls_back_to_exact_maxima_far_below_the_bound():
    """One source part 200 above the rest puts the global bound out of reach of other
    targets' scores (exp underflows): the result still equals the plain segment softmax."""
    graph = target_graph(EDGES, NODES)
    source, target = torch.zeros(NODES, 2), torch.zeros(NODES, 2)
    source[6] = 200.0  # node 6 sends only to node 4
    values = torch.randn(NODES, 2, 3)
    out = static_attention_kernel(source, target, values, graph, 0.2, None)
    scores = torch.nn.functional.leaky_relu(
        at_sources(source, graph) + at_targets(target, graph), 0.2
    )
    expected = aggregate(segment_softmax(scores, graph), values, graph)
    assert torch.isfinite(out).all()
    torch.testing.assert_close(out, expected)


def test_dynamic_scores_by_blocks_match_finite_differences(monkeypatch):
    """Several blocks of edges (4 per block), with and without edge parts."""
    from harness.models import sparse_dynamic

    monkeypatch.setattr(sparse_dynamic, "EDGES_PER_BLOCK", 4)
    graph = target_graph(EDGES, NODES)
    double = {"dtype": torch.float64, "requires_grad": True}
    source, target = torch.randn(NODES, 3, 2, **double), torch.randn(NODES, 3, 2, **double)
    att, edge_part = torch.randn(1, 3, 2, **double), torch.randn(graph.edges, 3, 2, **double)
    for part in (None, edge_part):
        assert gradcheck(
            lambda s, t, a, part=part: sparse_dynamic.dynamic_scores(s, t, a, part, graph, 0.2),
            (source, target, att),
        )
    assert gradcheck(
        lambda e: sparse_dynamic.dynamic_scores(source, target, att, e, graph, 0.2), (edge_part,)
    )


def test_fused_dynamic_attention_matches_torch_pieces():
    """The fused C loop (float32) against the same attention from the torch pieces (block-wise
    scores, segment softmax, mask, aggregate): output and every gradient, with and without
    edge parts and a dropout mask, on one thread and on three ranges of targets."""
    from harness.models import sparse_fused, sparse_native
    from harness.models.sparse_dynamic import dynamic_scores

    if sparse_native.library() is None:
        pytest.skip("no C compiler on this machine: the fused loop is not built")
    graph = target_graph(EDGES, NODES)
    inputs = [torch.randn(NODES, 3, 2), torch.randn(NODES, 3, 2), torch.randn(1, 3, 2)]
    edge_part, grad = torch.randn(graph.edges, 3, 2), torch.randn(NODES, 3, 2)
    mask = (torch.rand(3, graph.edges) > 0.3).float() / 0.7

    def output_and_gradients(fused: bool, part, keep) -> list[torch.Tensor]:  # noqa: ANN001
        leaves = [t.clone().requires_grad_() for t in (*inputs, *([] if part is None else [part]))]
        source, target, att, part = (*leaves, None)[:4]
        if fused:
            out = sparse_fused.dynamic_attention_kernel(source, target, att, part, keep, graph, 0.2)
        else:
            weights = segment_softmax(dynamic_scores(source, target, att, part, graph, 0.2), graph)
            out = aggregate(weights if keep is None else weights * keep, source, graph)
        out.backward(grad)
        return [out.detach(), *(leaf.grad for leaf in leaves)]

    assert sparse_native.native(*inputs)
    threads = torch.get_num_threads()
    try:
        for count in (1, 3):
            torch.set_num_threads(count)
            assert len(sparse_native.ranges(graph.offsets, count)) == count
            for part, keep in ((None, None), (edge_part, None), (None, mask), (edge_part, mask)):
                fused = output_and_gradients(True, part, keep)
                for one, other in zip(fused, output_and_gradients(False, part, keep), strict=True):
                    torch.testing.assert_close(one, other)
    finally:
        torch.set_num_threads(threads)


def test_native_products_match_torch_products(monkeypatch):
    """The C loops' products over every head at once (float32) against torch's CSR products
    and sampled products, one head at a time: both directions, on one thread and on three
    ranges of rows."""
    from harness.models import sparse_kernel, sparse_native

    if sparse_native.library() is None:
        pytest.skip("no C compiler on this machine: the C loops are not built")
    graph = target_graph(EDGES, NODES)
    weights, dense = torch.rand(3, graph.edges), torch.randn(NODES, 3, 4)
    left = torch.randn(NODES, 3, 4)

    def products() -> list[torch.Tensor]:
        return [
            sparse_kernel.csr_products(weights, dense, graph, transposed=False),
            sparse_kernel.csr_products(weights, dense, graph, transposed=True),
            sparse_kernel.sampled_products(left, dense, graph),
        ]

    threads = torch.get_num_threads()
    try:
        for count in (1, 3):
            torch.set_num_threads(count)
            native = products()
            with monkeypatch.context() as patch:
                patch.setattr(sparse_kernel, "native", lambda *tensors: False)
                by_torch = products()
            for one, other in zip(native, by_torch, strict=True):
                torch.testing.assert_close(one, other)
    finally:
        torch.set_num_threads(threads)


def test_static_scores_in_c_match_torch_operators(monkeypatch):
    """GAT's scores, exponentials and per-target sums in one C pass (float32) against torch's
    operators: output and every gradient, with and without a dropout mask, on one thread and
    on three ranges of targets (nodes 3, 5 and 6 have no in-edges)."""
    from harness.models import sparse_native, sparse_static

    if sparse_native.library() is None:
        pytest.skip("no C compiler on this machine: the C loops are not built")
    graph = target_graph(EDGES, NODES)
    inputs = [torch.randn(NODES, 3), torch.randn(NODES, 3), torch.randn(NODES, 3, 2)]
    grad, mask = torch.randn(NODES, 3, 2), (torch.rand(3, graph.edges) > 0.3).float() / 0.7

    def output_and_gradients(keep) -> list[torch.Tensor]:  # noqa: ANN001
        leaves = [t.clone().requires_grad_() for t in inputs]
        out = static_attention_kernel(*leaves, graph, 0.2, keep)
        out.backward(grad)
        return [out.detach(), *(leaf.grad for leaf in leaves)]

    threads = torch.get_num_threads()
    try:
        for count in (1, 3):
            torch.set_num_threads(count)
            for keep in (None, mask):
                in_c = output_and_gradients(keep)
                with monkeypatch.context() as patch:
                    patch.setattr(sparse_static, "native", lambda *tensors: False)
                    by_torch = output_and_gradients(keep)
                for one, other in zip(in_c, by_torch, strict=True):
                    torch.testing.assert_close(one, other)
    finally:
        torch.set_num_threads(threads)
