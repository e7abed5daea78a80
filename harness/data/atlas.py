"""networkx's graph atlas: every graph with up to seven nodes, 1,253 in all (Read and Wilson,
*An Atlas of Graphs*, Oxford University Press, 1998; `networkx.graph_atlas_g()`), labelled by a
property networkx computes. The null graph (no nodes) is left out: a model has nothing to read.
Every node starts from the same feature, 1, so only structure tells the classes apart.
"""

from __future__ import annotations

from collections.abc import Callable

import networkx as nx
import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import to_undirected

from harness.data.collection import GraphCollection, collect
from harness.schema.graph_data import AtlasData

PROPERTIES: dict[str, Callable[[nx.Graph], bool]] = {
    "bipartite": nx.is_bipartite,
    "triangle_free": lambda graph: sum(nx.triangles(graph).values()) == 0,
    "planar": nx.is_planar,
    "connected": nx.is_connected,
    "tree": nx.is_tree,
}


def atlas_graph(graph: nx.Graph, label: bool) -> Data:
    pairs = np.asarray(list(graph.edges()), dtype=np.int64).reshape(-1, 2).T
    nodes = graph.number_of_nodes()
    return Data(
        x=torch.ones(nodes, 1),
        edge_index=to_undirected(torch.from_numpy(pairs), num_nodes=nodes),
        y=torch.tensor([int(label)]),
    )


def graph_atlas(spec: AtlasData) -> GraphCollection:
    """The atlas's non-empty graphs, class 'yes' where the chosen property holds."""
    has_property = PROPERTIES[spec.label]
    graphs = [g for g in nx.graph_atlas_g() if g.number_of_nodes() > 0]
    return collect(
        [atlas_graph(graph, has_property(graph)) for graph in graphs],
        ["no", "yes"],
        skipped=("graph 0 of the atlas: the null graph, with no nodes",),
    )
