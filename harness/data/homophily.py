"""Homophily of a labelled graph: how often edges join nodes of the same class.

Only edges whose two endpoints are labelled count, and only nodes with such an edge. For an
undirected graph stored with both directions, E is the set of directed edges (each undirected
edge twice), which leaves every ratio below unchanged.

- edge (Zhu et al., 2020):   h_edge = |{(u,v) in E : y_u = y_v}| / |E|
- node (Pei et al., 2020):   h_node = mean over nodes v of the share of v's neighbours in y_v
- class-insensitive (Lim et al., 2021):
      h_ci = 1/(C-1) sum_k max(0, h_k - |C_k|/n),  h_k = same-class share of class k's edges
- adjusted (Platonov et al., 2023):
      h_adj = (h_edge - sum_k pbar_k^2) / (1 - sum_k pbar_k^2),  pbar_k = D_k / 2|E|,
  where D_k is the summed degree of class k's nodes and 2|E| the summed degree of all nodes:
  0 means edges join classes as often as a degree-preserving random graph would.
The first three come from PyG (`torch_geometric.utils.homophily`); the adjusted one is
computed here, from the paper's formula. `local_homophily` gives Pei et al.'s per-node term
itself, for the analysis only (it reads every node's label; no model ever sees it).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import torch
from torch_geometric.utils import homophily


@dataclass(frozen=True)
class Homophily:
    edge: float
    node: float
    class_insensitive: float
    adjusted: float


def labelled_edges(edge_index: torch.Tensor, y: torch.Tensor) -> torch.Tensor:
    keep = (y[edge_index[0]] >= 0) & (y[edge_index[1]] >= 0)
    return edge_index[:, keep]


def adjusted_homophily(edge_index: torch.Tensor, y: torch.Tensor) -> float:
    """Platonov et al. (2023), eq. for h_adj; nan when the labelled edges are all in one class."""
    edges = labelled_edges(edge_index, y).numpy()
    if edges.shape[1] == 0:
        return float("nan")
    labels = y.numpy()
    same = float(np.mean(labels[edges[0]] == labels[edges[1]]))
    # summed degree per class, counting each edge end once (both directions are stored)
    class_degree = np.bincount(labels[edges[0]], minlength=int(labels.max()) + 1).astype(float)
    expected = float(np.sum((class_degree / class_degree.sum()) ** 2))
    if expected >= 1.0:
        return float("nan")
    return (same - expected) / (1.0 - expected)


def local_homophily(edge_index: torch.Tensor, y: torch.Tensor) -> np.ndarray:
    """Per node v: |{u in N(v) labelled : y_u = y_v}| / |{u in N(v) labelled}| (Pei et al., 2020,
    the term inside h_node), N(v) the sources of the edges into v; NaN for an unlabelled node
    or one without labelled neighbours."""
    sources, targets = edge_index.numpy()
    labels = y.numpy()
    keep = (labels[sources] >= 0) & (labels[targets] >= 0)
    sources, targets = sources[keep], targets[keep]
    nodes = len(labels)
    same = np.bincount(targets, weights=labels[sources] == labels[targets], minlength=nodes)
    counted = np.bincount(targets, minlength=nodes).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(counted > 0, same / counted, np.nan)


def measure_homophily(edge_index: torch.Tensor, y: torch.Tensor) -> Homophily:
    """All four measures on the labelled part of a graph."""
    edges = labelled_edges(edge_index, y)
    if edges.size(1) == 0:
        nan = float("nan")
        return Homophily(nan, nan, nan, nan)
    # PyG averages over all nodes it is given; give it only nodes with a labelled edge
    present, compact = torch.unique(edges, return_inverse=True)
    labels = y[present]
    return Homophily(
        edge=float(homophily(compact, labels, method="edge")),
        node=float(homophily(compact, labels, method="node")),
        class_insensitive=float(homophily(compact, labels, method="edge_insensitive")),
        adjusted=adjusted_homophily(edge_index, y),
    )
