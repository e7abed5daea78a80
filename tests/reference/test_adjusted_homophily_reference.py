"""Adjusted homophily against the formula of Platonov et al. (2023), worked by hand.

Source: O. Platonov, D. Kuznedelev, A. Babenko, L. Prokhorenkova, "Characterizing Graph
Datasets for Node Classification: Homophily-Heterophily Dichotomy and Beyond", NeurIPS 2023:
    h_adj = (h_edge - sum_k pbar_k^2) / (1 - sum_k pbar_k^2),   pbar_k = D_k / (2|E|),
with D_k the summed degree of the nodes of class k.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import torch
from torch_geometric.utils import to_undirected

from harness.data.homophily import adjusted_homophily, measure_homophily


def graph(pairs: list[tuple[int, int]]) -> torch.Tensor:
    return to_undirected(torch.tensor(pairs).T)


def test_hand_built_graph() -> None:
    """Six nodes, seven edges. Degrees 2,3,3,2,2,2 (2|E| = 14); classes 0,0,0,1,1,2 give
    D = (8, 4, 2), sum pbar^2 = (64 + 16 + 4) / 196 = 3/7; same-class edges 4 of 7, so
    h_adj = (4/7 - 3/7) / (1 - 3/7) = 1/4."""
    labels = torch.tensor([0, 0, 0, 1, 1, 2])
    edges = graph([(0, 1), (1, 2), (0, 2), (3, 4), (2, 3), (4, 5), (1, 5)])
    by_hand = (Fraction(4, 7) - Fraction(3, 7)) / (1 - Fraction(3, 7))
    assert by_hand == Fraction(1, 4)
    assert adjusted_homophily(edges, labels) == pytest.approx(float(by_hand), abs=1e-12)
    assert measure_homophily(edges, labels).edge == pytest.approx(4 / 7, abs=1e-6)


def test_disjoint_same_class_cliques_give_one() -> None:
    labels = torch.tensor([0, 0, 0, 1, 1, 1])
    edges = graph([(0, 1), (1, 2), (0, 2), (3, 4), (4, 5), (3, 5)])
    assert adjusted_homophily(edges, labels) == pytest.approx(1.0)


def test_balanced_bipartite_graph_gives_minus_one() -> None:
    """Every edge joins the two classes, D_0 = D_1: h_edge = 0, sum pbar^2 = 1/2, h_adj = -1."""
    labels = torch.tensor([0, 0, 1, 1])
    edges = graph([(0, 2), (0, 3), (1, 2), (1, 3)])
    assert adjusted_homophily(edges, labels) == pytest.approx(-1.0)


def test_edges_to_unlabelled_nodes_are_left_out() -> None:
    """Adding an unlabelled node (-1) with edges leaves the hand-built value at 1/4."""
    labels = torch.tensor([0, 0, 0, 1, 1, 2, -1])
    pairs = [(0, 1), (1, 2), (0, 2), (3, 4), (2, 3), (4, 5), (1, 5), (6, 0), (6, 3)]
    assert adjusted_homophily(graph(pairs), labels) == pytest.approx(0.25)
