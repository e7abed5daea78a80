"""Contextual stochastic block model: planted classes, homophilous edges, Gaussian features.

Edges: each of m = nodes * average_degree / 2 undirected edges picks a uniform source node;
with probability `edge_homophily` its target is uniform within the source's class, otherwise
uniform among nodes of the other classes. Self-loops and duplicates are dropped afterwards.
Features: x_i = mu_{y_i} + N(0, I), with class means mu_c of norm `feature_signal` in random
directions (Deshpande et al., 2018 define the contextual SBM this generalises).
"""

from __future__ import annotations

import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import coalesce, remove_self_loops, to_undirected

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
    pairs = torch.from_numpy(sample_edges(labels, wanted, spec.edge_homophily, rng))
    pairs, _ = remove_self_loops(pairs)
    edge_index = coalesce(to_undirected(pairs, num_nodes=spec.nodes), num_nodes=spec.nodes)
    means = class_means(spec.classes, spec.feature_dimension, spec.feature_signal, rng)
    features = means[labels] + rng.standard_normal((spec.nodes, spec.feature_dimension))
    return Data(
        x=torch.from_numpy(features.astype(np.float32)),
        edge_index=edge_index,
        y=torch.from_numpy(labels.astype(np.int64)),
        num_nodes=spec.nodes,
    )
