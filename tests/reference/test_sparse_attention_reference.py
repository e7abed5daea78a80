"""The sparse attention kernel against PyG's own layers, kind by kind.

Reference: PyTorch Geometric 2.8's GATConv (Velickovic et al., 2018), GATv2Conv (Brody et al.,
2022) and TransformerConv (Shi et al., 2021; our dot-product kind), run on the same weights and
edges: outputs, input gradients and every parameter's gradient within 1e-4. Self-attention on
is PyG's `add_self_loops=True` against the kernel on the edge set PyG's own `add_self_loops`
utility builds (for edge attributes with its "mean" fill, as the layers do). Hop edge sets come
from networkx's shortest-path lengths. Attention dropout is compared by its mask (the kernel's
weights with a drawn mask against PyG's softmax utility times the same mask) and by its
statistics (the mean of many dropped-out outputs is the output without dropout).
"""

from __future__ import annotations

import networkx as nx
import pytest
import torch
from torch_geometric.nn import GATConv, GATv2Conv, TransformerConv
from torch_geometric.utils import add_self_loops, remove_self_loops, scatter, softmax

from harness.models.sparse_kernel import aggregate, segment_softmax, target_graph
from harness.models.sparse_layers import sparse_forward

NODES, FEATURES, WIDTH = 30, 6, 4
KINDS = {"gat": GATConv, "gatv2": GATv2Conv, "dot_product": TransformerConv}


def random_edges(seed: int, count: int = 160) -> torch.Tensor:
    """Random directed edges without self-loops (some nodes without in-edges)."""
    generator = torch.Generator().manual_seed(seed)
    edges = torch.randint(0, NODES - 3, (2, count), generator=generator)
    return remove_self_loops(edges)[0]


def make_layer(kind: str, heads: int, concat: bool, self_loops: bool, edge_dim: int | None):
    torch.manual_seed(7)
    options = {"heads": heads, "concat": concat, "edge_dim": edge_dim}
    if kind == "dot_product":
        return TransformerConv(FEATURES, WIDTH, **options)
    return KINDS[kind](FEATURES, WIDTH, add_self_loops=self_loops, residual=True, **options)


def gradients(layer: torch.nn.Module, run) -> tuple[torch.Tensor, torch.Tensor, list]:  # noqa: ANN001
    """Output, input gradient and parameter gradients of sum(out^2)."""
    torch.manual_seed(3)
    x = torch.randn(NODES, FEATURES, requires_grad=True)
    layer.zero_grad()
    out = run(x)
    out.square().sum().backward()
    return out.detach(), x.grad, [p.grad.clone() for p in layer.parameters() if p.grad is not None]


def assert_same(sparse: tuple, reference: tuple) -> None:
    torch.testing.assert_close(sparse[0], reference[0], atol=1e-4, rtol=1e-4)
    torch.testing.assert_close(sparse[1], reference[1], atol=1e-4, rtol=1e-4)
    assert len(sparse[2]) == len(reference[2])
    for ours, theirs in zip(sparse[2], reference[2], strict=True):
        torch.testing.assert_close(ours, theirs, atol=1e-4, rtol=1e-4)


@pytest.mark.parametrize("kind", sorted(KINDS))
@pytest.mark.parametrize("heads", [1, 3])
@pytest.mark.parametrize("concat", [True, False])
@pytest.mark.parametrize("self_loops", [True, False])
@pytest.mark.parametrize("edge_dim", [None, 2])
def test_layer_matches_pyg(kind, heads, concat, self_loops, edge_dim) -> None:
    """Same weights, same edges: PyG's layer and the kernel agree within 1e-4."""
    edges = random_edges(heads)
    attributes = torch.randn(edges.size(1), 2) if edge_dim else None
    layer = make_layer(kind, heads, concat, self_loops, edge_dim)
    kernel_edges, kernel_attributes = edges, attributes
    if self_loops:  # what the GAT layers do on every call, done once
        kernel_edges, kernel_attributes = add_self_loops(
            edges, attributes, fill_value="mean", num_nodes=NODES
        )
    if kind == "dot_product":  # TransformerConv adds no loops itself: it gets them given
        edges, attributes = kernel_edges, kernel_attributes
    reference = gradients(layer, lambda x: layer(x, edges, attributes))
    graph = target_graph(kernel_edges, NODES)
    sparse = gradients(layer, lambda x: sparse_forward(layer, x, graph, kernel_attributes))
    assert_same(sparse, reference)


def hop_edges_networkx(edges: torch.Tensor, radius: int) -> torch.Tensor:
    """Every (j, i) with 1 <= shortest-path length j -> i <= radius, by networkx."""
    graph = nx.DiGraph()
    graph.add_nodes_from(range(NODES))
    graph.add_edges_from(edges.t().tolist())
    pairs = [
        (source, target)
        for source, lengths in nx.all_pairs_shortest_path_length(graph, cutoff=radius)
        for target, length in lengths.items()
        if length >= 1
    ]
    return torch.tensor(pairs, dtype=torch.long).t()


@pytest.mark.parametrize("kind", sorted(KINDS))
def test_hop_edge_sets_match_pyg(kind) -> None:
    """On a 2-hop edge set (networkx), with self-loops, both agree as on one hop."""
    edges = hop_edges_networkx(random_edges(11, 60), radius=2)
    edges = add_self_loops(edges, num_nodes=NODES)[0]
    layer = make_layer(kind, 2, True, False, None)
    reference = gradients(layer, lambda x: layer(x, edges))
    graph = target_graph(edges, NODES)
    assert_same(gradients(layer, lambda x: sparse_forward(layer, x, graph)), reference)


def test_dropout_by_mask_matches_pyg_softmax() -> None:
    """Weights with a drawn dropout mask: the kernel's aggregate of softmax x mask / (1 - p)
    equals PyG's softmax utility and scatter-sum with the same mask, in the given edge order."""
    edges = add_self_loops(random_edges(5), num_nodes=NODES)[0]
    graph = target_graph(edges, NODES)
    torch.manual_seed(1)
    scores = torch.randn(edges.size(1), 2)  # [E, H] in the given order
    values = torch.randn(NODES, 2, 3)
    keep = (torch.rand(edges.size(1), 2) > 0.4).float() / 0.6
    reference_weights = softmax(scores, edges[1], num_nodes=NODES) * keep
    reference = scatter(
        reference_weights.unsqueeze(-1) * values[edges[0]], edges[1], 0, dim_size=NODES
    )
    in_order = graph.order
    weights = segment_softmax(scores[in_order].t(), graph) * keep[in_order].t()
    torch.testing.assert_close(aggregate(weights, values, graph), reference, atol=1e-5, rtol=1e-5)


@pytest.mark.parametrize("kind", sorted(KINDS))
def test_dropout_statistics(kind) -> None:
    """With attention dropout, outputs differ from draw to draw, and their mean over many draws
    approaches the output without dropout (inverted dropout keeps the expectation)."""
    edges = add_self_loops(random_edges(9), num_nodes=NODES)[0]
    graph = target_graph(edges, NODES)
    layer = make_layer(kind, 2, True, False, None)
    x = torch.randn(NODES, FEATURES)
    with torch.no_grad():
        layer.eval()
        expected = sparse_forward(layer, x, graph)
        layer.train()
        layer.dropout = 0.3
        torch.manual_seed(0)
        draws = torch.stack([sparse_forward(layer, x, graph) for _ in range(2000)])
    spread = draws.std(0) / 2000**0.5
    assert ((draws.mean(0) - expected).abs() <= 5 * spread + 1e-5).all()
    assert not torch.equal(draws[0], draws[1])
