"""Open datasets that registry packages ship, for trying Heedful and for reference checks.

- Zachary's karate club (Zachary, 1977, "An information flow model for conflict and fission in
  small groups"), networkx's copy: 34 members, 78 ties, labelled by the faction each member
  joined ("Mr. Hi" or "Officer"). Features are one-hot member ids, as usual for this graph.
- scikit-learn's digits: 1797 8x8 images of handwritten digits (the UCI optical recognition of
  handwritten digits data), pixel values scaled to [0, 1]; each image links to its k nearest
  images in Euclidean pixel space (`kneighbors_graph`), made undirected.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
from sklearn.datasets import load_digits
from sklearn.neighbors import kneighbors_graph
from torch_geometric.data import Data

from harness.data.assemble import assemble
from harness.schema.data import DigitsData, KarateData

KARATE_FACTIONS = ["Mr. Hi", "Officer"]


def karate_club(spec: KarateData) -> Data:
    """Zachary's karate club with the two factions as classes."""
    graph = nx.karate_club_graph()
    pairs = np.asarray(list(graph.edges()), dtype=np.int64)
    labels = np.array([KARATE_FACTIONS.index(graph.nodes[n]["club"]) for n in range(34)])
    return assemble(
        np.eye(34, dtype=np.float32),
        pairs[:, 0],
        pairs[:, 1],
        labels,
        class_names=KARATE_FACTIONS,
    )


def digits_graph(spec: DigitsData) -> Data:
    """The digits as a k-nearest-neighbour graph; labels are the digits 0-9."""
    digits = load_digits()
    features = digits.data / 16.0
    adjacency = kneighbors_graph(features, n_neighbors=spec.neighbours, include_self=False)
    adjacency = adjacency.tocoo()
    return assemble(
        features,
        adjacency.row,
        adjacency.col,
        digits.target,
        unordered_repeats=False,
        class_names=[str(d) for d in range(10)],
    )
