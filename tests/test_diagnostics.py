"""Attention diagnostics: hand-computed values, the stored format, and trained attention."""

from __future__ import annotations

import math

import pytest
import torch
from torch_geometric.utils import erdos_renyi_graph, to_undirected

from harness.data.splits import make_split
from harness.data.synthetic import contextual_sbm
from harness.models import build_model
from harness.schema.contenders import AttentionOptions
from harness.schema.data import SyntheticData
from harness.schema.splits import FractionSplit
from harness.schema.training import Training
from harness.training.diagnostics import (
    MEASURES,
    attention_diagnostics,
    chunked_attention_diagnostics,
    head_measures,
)
from harness.training.node_loss import fit_nodes


def test_head_measures_by_hand() -> None:
    """Node 0 attends to itself (0.5), node 1 (0.3, same label) and node 2 (0.2, other)."""
    edge_index = torch.tensor([[0, 1, 2, 0], [0, 0, 0, 1]])
    alpha = torch.tensor([0.5, 0.3, 0.2, 1.0])
    labels = torch.tensor([0, 0, 1])
    measures = head_measures(edge_index, alpha, labels, 3)
    entropy = -(0.5 * math.log(0.5) + 0.3 * math.log(0.3) + 0.2 * math.log(0.2))
    assert measures["entropy_ratio"] == pytest.approx(entropy / math.log(3))  # node 1: d = 1
    assert measures["self_share"] == pytest.approx(0.5)  # only node 0 has a self-loop
    assert measures["uniform_self_share"] == pytest.approx(1 / 3)
    # node 0: 0.3 / (0.3 + 0.2) on its same-label neighbour; node 1: all on node 0 (same label)
    assert measures["same_label_share"] == pytest.approx((0.6 + 1.0) / 2)
    assert measures["neighbour_homophily"] == pytest.approx((0.5 + 1.0) / 2)


def test_unlabelled_nodes_are_left_out() -> None:
    edge_index = torch.tensor([[1, 2], [0, 0]])
    measures = head_measures(edge_index, torch.tensor([0.9, 0.1]), torch.tensor([0, -1, 0]), 3)
    assert measures["same_label_share"] == pytest.approx(1.0)  # node 1 has no label
    assert measures["self_share"] is None  # no self-loops at all


def heterophilous_graph(classes: int, signal: float):
    """Eight classes, one edge in five within a class, features far apart (signal 6)."""
    spec = SyntheticData(
        source="synthetic",
        nodes=300,
        classes=classes,
        average_degree=10,
        edge_homophily=0.2,
        feature_dimension=16,
        feature_signal=signal,
        graph_seed=1,
    )
    data = contextual_sbm(spec)
    return data, make_split(data, FractionSplit(train=0.5, validation=0.25, test=0.25), 0)


def trained_attention(model: str, data, split, attend_to_self: bool) -> dict:
    torch.manual_seed(0)
    options = AttentionOptions(
        model=model, layers=1, heads=1, hidden=8, attend_to_self=attend_to_self, dropout=0.0
    )
    network = build_model(options, data.num_features, int(data.y.max()) + 1)
    training = Training(epochs=150, patience=150, learning_rate=0.02, weight_decay=0)
    fit_nodes(network, data, split, training, "accuracy")
    return attention_diagnostics(network, data.x, data.edge_index, data.y)


def test_dynamic_attention_finds_same_label_neighbours_and_static_does_not() -> None:
    """On a heterophilous graph with well-separated class features, and no self-loop so the
    prediction must come from neighbours, GATv2 puts far more mass on same-label neighbours
    than chance. Static GAT ranks all neighbours by one key score for every query, so it
    cannot pick "neighbours like me" (Brody et al., 2022, Theorem 1); measured here it stays
    near chance (0.23 against 0.19 when last run; GATv2 0.61)."""
    data, split = heterophilous_graph(classes=8, signal=6.0)
    dynamic = trained_attention("gatv2", data, split, attend_to_self=False)["mean"]
    static = trained_attention("gat", data, split, attend_to_self=False)["mean"]
    chance = dynamic["neighbour_homophily"]
    assert chance == pytest.approx(static["neighbour_homophily"])
    assert chance < 0.25
    assert dynamic["same_label_share"] > chance + 0.2
    assert static["same_label_share"] < dynamic["same_label_share"] - 0.2


@pytest.mark.parametrize("model", ["gat", "gatv2", "dot_product"])
def test_identical_features_give_uniform_attention(model: str) -> None:
    """Equal features give equal scores over each neighbourhood, so softmax is uniform."""
    data, split = heterophilous_graph(classes=4, signal=1.0)
    data = data.clone()
    data.x = torch.ones(data.num_nodes, 4)
    measures = trained_attention(model, data, split, attend_to_self=True)["mean"]
    assert measures["entropy_ratio"] == pytest.approx(1.0, abs=1e-4)
    assert measures["self_share"] == pytest.approx(measures["uniform_self_share"], abs=1e-4)


def test_stored_format_has_every_layer_and_head() -> None:
    data, _ = heterophilous_graph(classes=4, signal=1.0)
    torch.manual_seed(0)
    options = AttentionOptions(model="gatv2", layers=2, heads=[3, 2], hidden=4)
    network = build_model(options, data.num_features, 4)
    result = attention_diagnostics(network, data.x, data.edge_index, data.y)
    assert [(r["layer"], r["head"]) for r in result["heads"]] == [
        (1, 1),
        (1, 2),
        (1, 3),
        (2, 1),
        (2, 2),
    ]
    assert set(result["mean"]) == set(MEASURES)
    assert result["edges"] == data.edge_index.size(1) + data.num_nodes
    assert result["attend_to_self"] is True
    for record in result["heads"]:
        assert 0 < record["entropy_ratio"] <= 1 + 1e-9


def test_chunked_diagnostics_equal_the_whole_graph_ones():
    torch.manual_seed(0)
    x, labels = torch.randn(200, 6), torch.randint(-1, 3, (200,))
    edges = to_undirected(erdos_renyi_graph(200, 0.04))
    for options in (
        AttentionOptions(model="gat", heads=2),
        AttentionOptions(model="dot_product", attend_to_self=False, heads=[3, 1]),
    ):
        model = build_model(options, 6, 3)
        whole = attention_diagnostics(model, x, edges, labels)
        chunked = chunked_attention_diagnostics(model, x, edges, labels, chunk_nodes=17)
        assert chunked["edges"] == whole["edges"]
        assert [(r["layer"], r["head"]) for r in chunked["heads"]] == [
            (r["layer"], r["head"]) for r in whole["heads"]
        ]
        for mine, theirs in zip(chunked["heads"], whole["heads"], strict=True):
            for name in MEASURES:
                assert mine[name] == pytest.approx(theirs[name], abs=1e-9)
