"""Measured homophily against PyG's `homophily()` and a hand count on a small fixed graph.

Definitions:
- edge homophily (Zhu et al., 2020, "Beyond Homophily in Graph Neural Networks", eq. 1):
  h_edge = |{(u, v) in E : y_u = y_v}| / |E|
- node homophily (Pei et al., 2020, "Geom-GCN", eq. 5):
  h_node = 1/|V| sum_v |{u in N(v) : y_u = y_v}| / |N(v)|
Reference library: torch_geometric.utils.homophily (methods "edge" and "node").
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import torch
from torch_geometric.utils import degree, homophily, to_undirected

from harness.data.homophily import measure_homophily
from harness.data.synthetic import contextual_sbm
from harness.schema.data import SyntheticData

# Six nodes, seven undirected edges:
#   0-1, 1-2, 0-2 inside class 0 (a triangle); 3-4 inside class 1;
#   2-3, 4-5, 1-5 across classes (node 5 is class 2).
LABELS = torch.tensor([0, 0, 0, 1, 1, 2])
UNDIRECTED = [(0, 1), (1, 2), (0, 2), (3, 4), (2, 3), (4, 5), (1, 5)]


def fixed_graph() -> torch.Tensor:
    pairs = torch.tensor(UNDIRECTED).t()
    return to_undirected(pairs, num_nodes=6)


def test_hand_count_of_the_fixed_graph():
    """Hand count: 4 of 7 undirected edges join equal labels, so h_edge = 4/7.

    Node shares: node 0: 2/2; node 1: 2/3 (0, 2 same; 5 not); node 2: 2/3 (0, 1 same; 3 not);
    node 3: 1/2 (4 same; 2 not); node 4: 1/2 (3 same; 5 not); node 5: 0/2.
    h_node = (1 + 2/3 + 2/3 + 1/2 + 1/2 + 0) / 6 = (10/3) / 6 = 5/9.
    """
    node_shares = [Fraction(2, 2), Fraction(2, 3), Fraction(2, 3), Fraction(1, 2)]
    node_shares += [Fraction(1, 2), Fraction(0, 2)]
    assert sum(node_shares) / 6 == Fraction(5, 9)
    measured = measure_homophily(fixed_graph(), LABELS)
    assert measured.edge == pytest.approx(4 / 7, abs=1e-6)
    assert measured.node == pytest.approx(5 / 9, abs=1e-6)


def test_fixed_graph_equals_pyg_homophily():
    edges = fixed_graph()
    measured = measure_homophily(edges, LABELS)
    assert measured.edge == float(homophily(edges, LABELS, method="edge"))
    assert measured.node == float(homophily(edges, LABELS, method="node"))
    assert float(homophily(edges, LABELS, method="edge")) == pytest.approx(4 / 7, abs=1e-6)
    assert float(homophily(edges, LABELS, method="node")) == pytest.approx(5 / 9, abs=1e-6)


def test_isolated_and_unlabelled_nodes_do_not_count():
    """Pei et al. average over nodes with neighbours; PyG scores an isolated node 0 instead.

    Adding an isolated node 6 leaves the measured node homophily at the hand count 5/9, while
    PyG's raw figure drops to (10/3) / 7. An unlabelled node (-1) joined to node 0 is left out
    of both measures, so they equal PyG's on the labelled part of the graph.
    """
    labels = torch.cat([LABELS, torch.tensor([1])])
    measured = measure_homophily(fixed_graph(), labels)
    assert measured.node == pytest.approx(5 / 9, abs=1e-6)
    raw = float(homophily(fixed_graph(), labels, method="node"))
    assert raw == pytest.approx(10 / 3 / 7, abs=1e-6)
    unlabelled = torch.cat([LABELS, torch.tensor([-1])])
    with_stray = to_undirected(torch.cat([fixed_graph(), torch.tensor([[0], [6]])], 1))
    measured = measure_homophily(with_stray, unlabelled)
    assert measured.edge == pytest.approx(4 / 7, abs=1e-6)
    assert measured.node == pytest.approx(5 / 9, abs=1e-6)


@pytest.mark.parametrize("target", [0.15, 0.5, 0.85])
def test_generated_graph_measures_equal_pyg(target):
    spec = SyntheticData(
        source="synthetic", nodes=600, classes=3, average_degree=16, edge_homophily=target
    )
    graph = contextual_sbm(spec)
    assert degree(graph.edge_index[0], graph.num_nodes).min() > 0  # no isolated node here
    measured = measure_homophily(graph.edge_index, graph.y)
    assert measured.edge == float(homophily(graph.edge_index, graph.y, method="edge"))
    assert measured.node == pytest.approx(
        float(homophily(graph.edge_index, graph.y, method="node"))
    )
    # hand count over the edge list, straight from the definition
    same = (graph.y[graph.edge_index[0]] == graph.y[graph.edge_index[1]]).double().mean()
    assert measured.edge == pytest.approx(float(same), abs=1e-6)
