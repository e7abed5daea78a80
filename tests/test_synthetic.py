"""Contextual stochastic block model: target homophily, reproducibility, class balance, features."""

from __future__ import annotations

import numpy as np
import pytest
import torch
from torch_geometric.utils import homophily, is_undirected

from harness.data.synthetic import class_labels, contextual_sbm
from harness.schema.data import SyntheticData


def section(**changes) -> SyntheticData:
    values = {
        "source": "synthetic",
        "nodes": 3000,
        "classes": 4,
        "average_degree": 8,
        "edge_homophily": 0.6,
        "feature_dimension": 4,
        "feature_signal": 1.0,
        "graph_seed": 11,
    }
    return SyntheticData(**(values | changes))


@pytest.mark.parametrize("target", [0.0, 0.2, 0.45, 0.7, 0.9, 1.0])
def test_measured_edge_homophily_within_003_of_target_on_3000_nodes(target):
    graph = contextual_sbm(section(edge_homophily=target))
    measured = float(homophily(graph.edge_index, graph.y, method="edge"))
    assert abs(measured - target) <= 0.03, (target, measured)


def test_target_holds_with_unequal_classes_and_another_seed():
    spec = section(edge_homophily=0.3, class_balance=[0.55, 0.25, 0.15, 0.05], graph_seed=99)
    graph = contextual_sbm(spec)
    assert abs(float(homophily(graph.edge_index, graph.y, method="edge")) - 0.3) <= 0.03


def test_same_seed_same_graph_other_seed_other_graph():
    first, again = contextual_sbm(section(nodes=400)), contextual_sbm(section(nodes=400))
    for name in ("x", "edge_index", "y"):
        assert torch.equal(getattr(first, name), getattr(again, name))
    other = contextual_sbm(section(nodes=400, graph_seed=12))
    assert not torch.equal(first.edge_index, other.edge_index)
    assert not torch.equal(first.y, other.y)


def test_graph_is_undirected_coalesced_without_self_loops():
    graph = contextual_sbm(section(nodes=500))
    edges = graph.edge_index
    assert is_undirected(edges, num_nodes=graph.num_nodes)
    assert not bool((edges[0] == edges[1]).any())
    pairs = edges[0] * graph.num_nodes + edges[1]
    assert len(torch.unique(pairs)) == edges.size(1)
    assert bool((pairs[1:] > pairs[:-1]).all())  # sorted by (source, target)
    # duplicates and self-loops are dropped, so the mean degree lands a little below the target
    mean_degree = edges.size(1) / graph.num_nodes
    assert 7.5 <= mean_degree <= 8.0


def test_class_balance_is_respected():
    balance = [0.5, 0.3, 0.15, 0.05]
    graph = contextual_sbm(section(nodes=1000, class_balance=balance))
    counts = torch.bincount(graph.y, minlength=4).tolist()
    assert counts == [500, 300, 150, 50]
    assert graph.x.shape == (1000, 4) and graph.x.dtype == torch.float32


def test_class_sizes_are_proportional_and_sum_to_nodes():
    rng = np.random.default_rng(0)
    labels = class_labels(10, [1.0, 1.0, 1.0], rng)
    assert sorted(np.bincount(labels).tolist()) == [3, 3, 4]
    labels = class_labels(7, [2.0, 1.0], rng)
    assert np.bincount(labels).tolist() == [5, 2]  # 4.67 -> 5 and 2.33 -> 2


def test_feature_signal_separates_class_means():
    """Class means of the features sit `feature_signal` from the origin (up to sample noise)."""
    graph = contextual_sbm(section(nodes=3000, feature_signal=2.0, feature_dimension=6))
    x, y = graph.x.double(), graph.y
    means = torch.stack([x[y == c].mean(0) for c in range(4)])
    assert torch.allclose(means.norm(dim=1), torch.full((4,), 2.0, dtype=torch.float64), atol=0.1)
    noise = torch.cat([x[y == c] - means[c] for c in range(4)])
    assert abs(float(noise.std()) - 1.0) < 0.03  # unit Gaussian noise
    flat = contextual_sbm(section(nodes=3000, feature_signal=0.0, feature_dimension=6))
    assert float(flat.x.double().mean(0).norm()) < 0.1
