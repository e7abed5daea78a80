"""Edges derived once per graph: the same tensors a per-forward rebuild would give, checked
against PyG's own self-loop utilities and its GCNConv (reference library)."""

from __future__ import annotations

import copy

import pytest
import torch
from torch_geometric.nn import GCNConv
from torch_geometric.utils import add_self_loops, remove_self_loops

from harness.data import load_graph
from harness.models import build_model
from harness.models.graph_cache import once_per_graph
from harness.schema.contenders import (
    AttentionOptions,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)
from harness.schema.data import SyntheticData

GRAPH = SyntheticData(source="synthetic", nodes=60, classes=3, average_degree=4, graph_seed=5)


def attention_edges(stack, edge_index, nodes):
    """The attention edge set as the stack's forward pass takes it: from its cache."""
    return once_per_graph(stack.edge_cache, edge_index, nodes, stack.message_edges)[0]


def with_a_self_loop(edge_index: torch.Tensor) -> torch.Tensor:
    return torch.cat([edge_index, torch.tensor([[3], [3]])], dim=1)


def test_attention_edges_built_once_equal_the_per_forward_set():
    data = load_graph(GRAPH)
    edges = with_a_self_loop(data.edge_index)
    stack = build_model(AttentionOptions(model="gat", heads=2, hidden=4), 8, 3)
    once = attention_edges(stack, edges, data.num_nodes)
    # what the stack built on every forward pass before: PyG's utilities, called afresh
    per_forward, _ = add_self_loops(remove_self_loops(edges)[0], num_nodes=data.num_nodes)
    assert torch.equal(once, per_forward)
    assert attention_edges(stack, edges, data.num_nodes) is once  # reused, not rebuilt
    assert int((once[0] == once[1]).sum()) == data.num_nodes  # exactly one loop per node
    other = data.edge_index[:, :10]
    assert torch.equal(
        attention_edges(stack, other, data.num_nodes),
        add_self_loops(other, num_nodes=data.num_nodes)[0],
    )


def test_an_edge_tensor_changed_in_place_is_derived_again():
    data = load_graph(GRAPH)
    edges = data.edge_index.clone()
    options = AttentionOptions(model="gat", heads=2, hidden=4, attend_to_self=False)
    stack = build_model(options, 8, 3)
    before = attention_edges(stack, edges, data.num_nodes)
    edges[0, 0] = edges[1, 0]  # now a self-loop, which attention must drop
    after = attention_edges(stack, edges, data.num_nodes)
    assert after.size(1) == before.size(1) - 1


def test_convolution_with_weights_computed_once_is_bit_identical_to_pyg_gcnconv():
    data = load_graph(GRAPH)
    torch.manual_seed(0)
    model = build_model(ConvolutionOptions(model="gcn", hidden=16), data.num_features, 3).eval()
    reference = [GCNConv(layer.in_channels, layer.out_channels) for layer in model.layers]
    for ours, theirs in zip(model.layers, reference, strict=True):
        theirs.load_state_dict(ours.state_dict())
    x = data.x
    with torch.no_grad():
        expected = torch.nn.functional.elu(reference[0](x, data.edge_index))
        expected = reference[1](expected, data.edge_index)
        first, again = model(x, data.edge_index), model(x, data.edge_index)
    assert torch.equal(first, expected) and torch.equal(again, expected)


def test_a_copied_model_derives_its_edges_afresh():
    data = load_graph(GRAPH)
    stack = build_model(AttentionOptions(model="gat", heads=2, hidden=4), 8, 3)
    built = attention_edges(stack, data.edge_index, data.num_nodes)
    twin = copy.deepcopy(stack)
    assert twin.edge_cache.sources == ()
    assert torch.equal(attention_edges(twin, data.edge_index, data.num_nodes), built)


@pytest.mark.parametrize(
    "options",
    [
        AttentionOptions(model="gat", heads=2, hidden=4),
        AttentionOptions(model="gatv2", heads=[2, 3], hidden=4, head_merge="concatenate"),
        AttentionOptions(model="dot_product", heads=2, hidden=4, layers=3, residual=True),
        ConvolutionOptions(model="gcn", hidden=16),
        NeighbourMeanOptions(model="sage", hidden=16),
        MLPOptions(model="mlp", hidden=16),
    ],
    ids=lambda options: options.model,
)
def test_validation_rows_alone_get_the_logits_of_a_full_pass_bit_for_bit(options):
    data = load_graph(GRAPH)
    torch.manual_seed(0)
    model = build_model(options, data.num_features, 3).eval()
    rows = torch.tensor([5, 1, 40, 17, 33])
    with torch.no_grad():
        full = model(data.x, data.edge_index)
        alone, again = (model(data.x, data.edge_index, rows=rows) for _ in range(2))
    assert torch.equal(alone, full[rows]) and torch.equal(again, full[rows])
