"""Model builders: every kind builds and runs; attention layers take the shapes asked for."""

from __future__ import annotations

import pytest
import torch
from torch import nn
from torch_geometric.nn import GATConv, GATv2Conv, TransformerConv

from harness.models import EmbeddingStart, build_model
from harness.schema.contenders import (
    AttentionOptions,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)

NODES, FEATURES, CLASSES = 12, 5, 3


def ring() -> torch.Tensor:
    left = torch.arange(NODES)
    right = (left + 1) % NODES
    return torch.cat([torch.stack([left, right]), torch.stack([right, left])], dim=1)


@pytest.mark.parametrize(
    "options",
    [
        AttentionOptions(model="gat", heads=2, hidden=4),
        AttentionOptions(model="gatv2", heads=2, hidden=4),
        AttentionOptions(model="dot_product", heads=2, hidden=4),
        ConvolutionOptions(model="gcn", hidden=6),
        NeighbourMeanOptions(model="sage", hidden=6),
        MLPOptions(model="mlp", hidden=6),
    ],
    ids=lambda o: o.model,
)
def test_every_kind_gives_class_logits(options) -> None:
    torch.manual_seed(0)
    model = build_model(options, FEATURES, CLASSES)
    out = model(torch.randn(NODES, FEATURES), ring())
    assert out.shape == (NODES, CLASSES)
    assert torch.isfinite(out).all()


def test_scoring_variants_use_their_layers() -> None:
    layer_of = {"gat": GATConv, "gatv2": GATv2Conv, "dot_product": TransformerConv}
    for kind, layer_class in layer_of.items():
        model = build_model(AttentionOptions(model=kind, heads=2, hidden=4), FEATURES, CLASSES)
        assert all(isinstance(layer, layer_class) for layer in model.layers)


def test_default_merge_concatenates_hidden_and_averages_output() -> None:
    """Velickovic et al. (2018): hidden layers concatenate heads, the output layer averages."""
    model = build_model(AttentionOptions(model="gat", heads=3, hidden=4, layers=3), 5, CLASSES)
    assert [layer.concat for layer in model.layers] == [True, True, False]
    assert model.layers[1].in_channels == 3 * 4 and model.layers[2].in_channels == 3 * 4
    assert model.projection is None


def test_per_layer_heads_and_merges() -> None:
    options = AttentionOptions(
        model="gatv2", layers=2, heads=[4, 2], hidden=3, head_merge=["average", "concatenate"]
    )
    model = build_model(options, FEATURES, CLASSES)
    assert [layer.heads for layer in model.layers] == [4, 2]
    assert model.layers[1].in_channels == 3  # averaged heads keep the per-head width
    assert isinstance(model.projection, nn.Linear)  # concatenated output: 2 x 3 -> 3 classes
    assert model.projection.in_features == 2 * CLASSES
    assert model(torch.randn(NODES, FEATURES), ring()).shape == (NODES, CLASSES)


def test_self_loops_follow_attend_to_self() -> None:
    with_loops = build_model(AttentionOptions(model="gat"), FEATURES, CLASSES)
    without = build_model(AttentionOptions(model="gat", attend_to_self=False), FEATURES, CLASSES)
    edges = torch.cat([ring(), torch.tensor([[0], [0]])], dim=1)  # one self-loop in the input
    looped = with_loops.attention_edges(edges, NODES)
    assert int((looped[0] == looped[1]).sum()) == NODES  # exactly one per node
    assert int((without.attention_edges(edges, NODES)[0] == 0).sum()) == 2  # 0->1, 0->11


def test_slope_residual_and_dropout_reach_the_layers() -> None:
    options = AttentionOptions(
        model="gat", negative_slope=0.05, residual=True, attention_dropout=0.3
    )
    layer = build_model(options, FEATURES, CLASSES).layers[0]
    assert (layer.negative_slope, layer.dropout) == (0.05, 0.3)
    assert layer.res is not None
    plain = build_model(AttentionOptions(model="dot_product"), FEATURES, CLASSES).layers[0]
    assert plain.root_weight is False and plain.lin_skip is None  # no skip term W_r h_i
    rooted = AttentionOptions(model="dot_product", residual=True)
    assert build_model(rooted, FEATURES, CLASSES).layers[0].root_weight is True


def test_identity_start_wraps_an_embedding_table() -> None:
    model = build_model(MLPOptions(model="mlp", hidden=4), 7, CLASSES, embedding_rows=NODES)
    assert isinstance(model, EmbeddingStart)
    assert model.embedding.weight.shape == (NODES, 7)
    out = model(torch.arange(NODES), ring())
    assert out.shape == (NODES, CLASSES)
    out.sum().backward()
    assert model.embedding.weight.grad is not None
