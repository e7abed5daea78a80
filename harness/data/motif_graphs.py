"""Planted-motif graphs: a seeded random tree with one motif attached by a single edge; the
class is which motif. A common synthetic check of graph classifiers: the label lives in the
structure, so only a model that reads edges can find it (unless `feature_signal` > 0).

Trees come from uniformly random Prüfer sequences (every labelled tree equally likely; Prüfer,
1918). Motifs: a 6-cycle, a star with 5 leaves, the 5-node house, a 5-clique (networkx's
generators).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import coalesce, remove_self_loops, to_undirected

from harness.data.collection import GraphCollection, collect
from harness.data.synthetic import class_labels, class_means
from harness.schema.graph_data import MotifGraphsData

MOTIF_GRAPHS = {
    "cycle": lambda: nx.cycle_graph(6),
    "star": lambda: nx.star_graph(5),
    "house": nx.house_graph,
    "clique": lambda: nx.complete_graph(5),
}


def random_tree(size: int, rng: np.random.Generator) -> np.ndarray:
    """Edges (2, size - 1) of a uniformly random labelled tree on `size` nodes."""
    if size < 2:
        return np.zeros((2, 0), dtype=np.int64)
    if size == 2:
        return np.array([[0], [1]])
    tree = nx.from_prufer_sequence(rng.integers(0, size, size - 2).tolist())
    return np.asarray(list(tree.edges()), dtype=np.int64).T


def motif_graph(
    motif: str, spec: MotifGraphsData, mean: np.ndarray, label: int, rng: np.random.Generator
) -> Data:
    """One tree with the motif attached; features are noise plus `mean` on the motif's nodes."""
    tree_size = int(rng.integers(spec.tree_nodes_min, spec.tree_nodes_max + 1))
    shape = MOTIF_GRAPHS[motif]()
    motif_edges = np.asarray(list(shape.edges()), dtype=np.int64).T + tree_size
    size = tree_size + shape.number_of_nodes()
    bridge = np.array([[rng.integers(tree_size)], [tree_size + rng.integers(len(shape))]])
    pairs = np.concatenate([random_tree(tree_size, rng), motif_edges, bridge], axis=1)
    extra = int(round(spec.edge_noise * pairs.shape[1]))
    if extra:
        pairs = np.concatenate([pairs, rng.integers(0, size, (2, extra))], axis=1)
    edge_index, _ = remove_self_loops(torch.from_numpy(pairs))
    edge_index = coalesce(to_undirected(edge_index, num_nodes=size), num_nodes=size)
    features = rng.standard_normal((size, spec.feature_dimension))
    features[tree_size:] += mean
    return Data(
        x=torch.from_numpy(features.astype(np.float32)),
        edge_index=edge_index,
        y=torch.tensor([label]),
    )


def motif_graphs(spec: MotifGraphsData) -> GraphCollection:
    """The collection a `synthetic_graphs` section describes; the same spec gives the same
    graphs."""
    rng = np.random.default_rng(spec.graph_seed)
    classes = len(spec.motifs)
    labels = class_labels(spec.graphs, spec.class_balance or [1.0] * classes, rng)
    means = class_means(classes, spec.feature_dimension, spec.feature_signal, rng)
    graphs = [
        motif_graph(spec.motifs[label], spec, means[label], int(label), rng) for label in labels
    ]
    return collect(graphs, list(spec.motifs))
