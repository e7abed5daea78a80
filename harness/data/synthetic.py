"""Contextual stochastic block model: planted classes, homophilous edges, Gaussian features.

Edges: each of m = nodes * average_degree / 2 undirected edges picks a uniform source node;
with probability `edge_homophily` its target is uniform within the source's class, otherwise
uniform among nodes of the other classes. Self-loops and duplicates are dropped afterwards.
Features: x_i = mu_{y_i} + N(0, I), with class means mu_c of norm `feature_signal` in random
directions (Deshpande et al., 2018 define the contextual SBM this generalises).
Typed edges (`edge_types` k >= 2): each edge draws a type uniformly from k; type 0 edges are
drawn as above, the others join a uniformly random target, so only type 0 carries the label
signal. The type is a one-hot edge attribute `edge_type=t`, the same in both directions.
"""

from __future__ import annotations

import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import coalesce, remove_self_loops, to_undirected

from harness.data.edge_attributes import attach_edge_types
from harness.schema.data import SyntheticData


def class_labels(nodes: int, balance: list[float], rng: np.random.Generator) -> np.ndarray:
    """Labels with class sizes proportional to `balance`, in random node order."""
    shares = np.asarray(balance, dtype=float) / np.sum(balance)
    counts = np.floor(shares * nodes).astype(int)
    counts[np.argsort(-(shares * nodes - counts))[: nodes - counts.sum()]] += 1
    labels = np.repeat(np.arange(len(balance)), counts)
    return rng.permutation(labels)


def sample_edges(
    labels: np.ndarray, edges: int, homophily: float, rng: np.random.Generator
) -> np.ndarray:
    """Directed edge list (2, edges) with the given share of same-class endpoints."""
    order = np.argsort(labels, kind="stable")
    sizes = np.bincount(labels)
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    source = rng.integers(0, len(labels), size=edges)
    source_class = labels[source]
    same = rng.random(edges) < homophily
    start, size = starts[source_class], sizes[source_class]
    # same class: a uniform position inside the class block
    within = start + (rng.random(edges) * size).astype(np.int64)
    # other classes: a uniform position among the blocks before and after the class block
    outside = (rng.random(edges) * (len(labels) - size)).astype(np.int64)
    outside = np.where(outside < start, outside, outside + size)
    target = order[np.where(same, within, outside)]
    return np.stack([source, target])


def class_means(
    classes: int, dimension: int, signal: float, rng: np.random.Generator
) -> np.ndarray:
    directions = rng.standard_normal((classes, dimension))
    directions /= np.linalg.norm(directions, axis=1, keepdims=True)
    return signal * directions


def contextual_sbm(spec: SyntheticData) -> Data:
    """The graph a synthetic data section describes; the same spec gives the same graph."""
    rng = np.random.default_rng(spec.graph_seed)
    balance = spec.class_balance or [1.0] * spec.classes
    labels = class_labels(spec.nodes, balance, rng)
    wanted = int(round(spec.nodes * spec.average_degree / 2))
    pairs = sample_edges(labels, wanted, spec.edge_homophily, rng)
    types = None
    if spec.edge_types > 1:  # drawn after the untyped graph's draws, which stay the same
        types = rng.integers(0, spec.edge_types, size=wanted)
        random_targets = rng.integers(0, spec.nodes, size=wanted)
        pairs[1] = np.where(types == 0, pairs[1], random_targets)
    means = class_means(spec.classes, spec.feature_dimension, spec.feature_signal, rng)
    features = means[labels] + rng.standard_normal((spec.nodes, spec.feature_dimension))
    data = Data(
        x=torch.from_numpy(features.astype(np.float32)),
        y=torch.from_numpy(labels.astype(np.int64)),
        num_nodes=spec.nodes,
    )
    if types is None:
        edges, _ = remove_self_loops(torch.from_numpy(pairs))
        data.edge_index = coalesce(to_undirected(edges, num_nodes=spec.nodes), num_nodes=spec.nodes)
        return data
    one_hot = torch.nn.functional.one_hot(torch.from_numpy(types), spec.edge_types).float()
    edges, one_hot = remove_self_loops(torch.from_numpy(pairs), one_hot)
    # an edge drawn twice with two types keeps the mean one-hot; its type is the larger share
    data.edge_index, data.edge_attr = to_undirected(edges, one_hot, spec.nodes, reduce="mean")
    names = [f"edge_type={t}" for t in range(spec.edge_types)]
    attach_edge_types(
        data, names, list(range(spec.edge_types)), [str(t) for t in range(spec.edge_types)]
    )
    return data
