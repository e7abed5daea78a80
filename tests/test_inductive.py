"""Inductive setting: no held-out node or edge in the training forward pass, and new-node
arrival that updates only the affected outputs yet equals a full recompute."""

from __future__ import annotations

import pytest
import torch

import harness.training.node_loss
import harness.training.runs
from harness.data import load_graph
from harness.data.inductive import measure_arrival, training_subgraph
from harness.data.splits import make_split
from harness.models import build_model
from harness.planning import expand, parse_suite


def karate_suite(model: dict, setting: str = "inductive", epochs: int = 6):
    raw = {
        "name": "clubhouse",
        "seeds": [3],
        "setting": setting,
        "data": {"source": "karate"},
        "split": {"method": "per_class", "train_per_class": 6, "validation_per_class": 3},
        "training": {"epochs": epochs, "patience": epochs},
        "contenders": {"contender": model},
    }
    return parse_suite(raw, "clubhouse.toml")


def test_training_subgraph_keeps_only_training_nodes_and_their_edges() -> None:
    suite = karate_suite({"model": "gcn"})
    data = load_graph(suite.data)
    split = make_split(data, suite.split, 3)
    graph = training_subgraph(data, split)
    assert graph.num_nodes == len(split.train)
    assert torch.equal(graph.x, data.x[split.train])
    original = graph.original[graph.edge_index]
    train = set(split.train.tolist())
    assert set(original.flatten().tolist()) <= train
    inside = [(a, b) for a, b in data.edge_index.T.tolist() if a in train and b in train]
    assert sorted(map(tuple, original.T.tolist())) == sorted(inside)


@pytest.mark.parametrize("model", [{"model": "gcn", "hidden": 8}, {"model": "gat", "heads": 2}])
def test_no_held_out_node_or_edge_reaches_the_training_forward_pass(monkeypatch, model) -> None:
    """Karate features are one-hot member ids, so each row the model sees names its node."""
    seen: list[tuple[bool, torch.Tensor, torch.Tensor]] = []

    def recording_build(*args, **kwargs):
        network = build_model(*args, **kwargs)
        network.register_forward_pre_hook(
            lambda module, inputs: seen.append((module.training, inputs[0], inputs[1]))
        )
        return network

    monkeypatch.setattr(harness.training.node_loss, "build_model", recording_build)
    suite = karate_suite(model)
    spec = expand(suite)[0]
    data = load_graph(suite.data)
    split = make_split(data, suite.split, spec.seed)
    harness.training.runs.perform(spec)
    train = set(split.train.tolist())
    held_out = set(split.validation.tolist()) | set(split.test.tolist())
    training_calls = [(x, edges) for training, x, edges in seen if training]
    assert len(training_calls) == 6  # one per epoch
    for x, edges in training_calls:
        node_of_row = x.argmax(1)
        assert set(node_of_row.tolist()) == train
        assert not set(node_of_row.tolist()) & held_out
        touched = set(node_of_row[edges].flatten().tolist())
        assert touched <= train
    evaluation_calls = [x for training, x, _ in seen if not training]
    assert evaluation_calls and all(x.size(0) == 34 for x in evaluation_calls[:6])


@pytest.mark.parametrize(
    ("options", "radius"),
    [
        ({"model": "gcn", "hidden": 8}, 3),  # two layers, plus one hop for degree weights
        ({"model": "gat", "heads": 2, "hidden": 4}, 2),
        ({"model": "sage", "hidden": 8, "layers": 3}, 3),
    ],
)
def test_arrival_update_equals_a_full_recompute(options: dict, radius: int) -> None:
    raw = {
        "name": "arrivals",
        "data": {"source": "synthetic", "nodes": 160, "classes": 3, "average_degree": 5},
        "split": {"train": 0.3, "validation": 0.2, "test": 0.5},
        "contenders": {"c": options},
    }
    suite = parse_suite(raw, "arrivals.toml")
    data = load_graph(suite.data)
    split = make_split(data, suite.split, 0)
    torch.manual_seed(0)
    model = build_model(suite.contenders["c"], data.num_features, 3)
    report = measure_arrival(model, data, split, radius, batches=6, seed=1)
    assert report.new_nodes == len(split.validation) + len(split.test)
    assert report.batches == 6
    assert report.max_difference <= 1e-6
    assert report.update_seconds_per_new_node > 0 and report.full_seconds_per_new_node > 0


def test_too_small_a_radius_is_caught_by_the_comparison() -> None:
    """Degree weights reach one hop past the layers: radius = layers misses changed nodes."""
    raw = {
        "name": "arrivals",
        "data": {"source": "synthetic", "nodes": 160, "classes": 3, "average_degree": 5},
        "split": {"train": 0.3, "validation": 0.2, "test": 0.5},
        "contenders": {"c": {"model": "gcn", "hidden": 8}},
    }
    suite = parse_suite(raw, "arrivals.toml")
    data = load_graph(suite.data)
    torch.manual_seed(0)
    model = build_model(suite.contenders["c"], data.num_features, 3)
    report = measure_arrival(model, data, make_split(data, suite.split, 0), radius=2, batches=6)
    assert report.max_difference > 1e-4


def test_inductive_runs_store_the_arrival_figures() -> None:
    suite = karate_suite({"model": "sage", "hidden": 8}, epochs=3)
    result = harness.training.runs.perform(expand(suite)[0])
    arrival = result.extras["arrival"]
    assert arrival["new_nodes"] == 34 - 12
    assert arrival["radius"] == 2
    assert arrival["max_difference"] <= 1e-6


def test_transductive_runs_have_no_arrival() -> None:
    suite = karate_suite({"model": "mlp", "hidden": 8}, setting="transductive", epochs=2)
    assert "arrival" not in harness.training.runs.perform(expand(suite)[0]).extras
