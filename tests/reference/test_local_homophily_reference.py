"""Local (per-node) homophily against a hand count and against PyG's node homophily.

Definition: Pei et al., 2020, "Geom-GCN: Geometric Graph Convolutional Networks", eq. 5:
h_node = 1/|V| sum_v |{u in N(v) : y_u = y_v}| / |N(v)|; the local homophily of node v is the
term inside the sum. Reference library: torch_geometric.utils.homophily(method="node"), which
averages that term over all nodes, so on a graph without isolated nodes the mean of the local
terms must equal it.
"""

from __future__ import annotations

import numpy as np
import pytest
import torch
from torch_geometric.data import Data
from torch_geometric.utils import degree, erdos_renyi_graph, homophily, to_undirected

from harness.analysis.node_groups import NO_LABELLED_NEIGHBOURS, homophily_groups
from harness.data.homophily import local_homophily

# Six nodes, seven undirected edges (the graph of test_homophily_reference.py):
#   0-1, 1-2, 0-2 inside class 0; 3-4 inside class 1; 2-3, 4-5, 1-5 across classes.
LABELS = torch.tensor([0, 0, 0, 1, 1, 2])
UNDIRECTED = [(0, 1), (1, 2), (0, 2), (3, 4), (2, 3), (4, 5), (1, 5)]


def fixed_graph() -> torch.Tensor:
    return to_undirected(torch.tensor(UNDIRECTED).t(), num_nodes=6)


def test_hand_count_of_the_fixed_graph():
    """Hand count per node: 0: 2/2; 1: 2/3 (0, 2 same; 5 not); 2: 2/3 (0, 1; 3 not);
    3: 1/2 (4; 2 not); 4: 1/2 (3; 5 not); 5: 0/2."""
    shares = local_homophily(fixed_graph(), LABELS)
    assert shares == pytest.approx([1, 2 / 3, 2 / 3, 1 / 2, 1 / 2, 0])


def test_unlabelled_neighbours_do_not_count():
    """Node 6 is unlabelled and joined to node 0; node 7 is labelled and joined only to node
    6: node 0 keeps 2/2, node 6 has no share (unlabelled), node 7 has no labelled neighbour."""
    labels = torch.cat([LABELS, torch.tensor([-1, 0])])
    extra = torch.tensor([[0, 6], [6, 7]]).t()
    edges = to_undirected(torch.cat([fixed_graph(), extra], 1), num_nodes=8)
    shares = local_homophily(edges, labels)
    assert shares[:6] == pytest.approx([1, 2 / 3, 2 / 3, 1 / 2, 1 / 2, 0])
    assert np.isnan(shares[6]) and np.isnan(shares[7])
    groups = homophily_groups(Data(edge_index=edges, y=labels, num_nodes=8), [0, 0.5, 1])
    assert groups.labels == ("0.0-0.5", "0.5-1.0", NO_LABELLED_NEIGHBOURS)
    # 0.5 falls in the upper bin (lower edge included), 1.0 in the last bin (upper included)
    assert groups.of_node.tolist() == [1, 1, 1, 1, 1, 0, -1, 2]


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_mean_equals_pyg_node_homophily_on_random_graphs(seed):
    generator = torch.Generator().manual_seed(seed)
    torch.manual_seed(seed)
    nodes = 200
    edges = erdos_renyi_graph(nodes, 0.05)
    labels = torch.randint(0, 4, (nodes,), generator=generator)
    assert degree(edges[1], nodes).min() > 0  # no isolated node, so PyG's mean is Pei's
    shares = local_homophily(edges, labels)
    assert shares.mean() == pytest.approx(float(homophily(edges, labels, method="node")))
