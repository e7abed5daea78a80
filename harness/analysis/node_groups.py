"""Groups of nodes for the per-node breakdown: degree and local homophily in the input graph.

Both are read from the suite's graph as loaded, before any feature start or hop expansion, so
a node falls in the same group for every contender, the edge-blind MLP included. Local
homophily reads the labels of every node's neighbours; it is computed here, after training,
and never reaches a model.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from torch_geometric.data import Data
from torch_geometric.utils import degree

from harness.data.collection import GraphCollection
from harness.data.homophily import local_homophily
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis

NO_LABELLED_NEIGHBOURS = "no labelled neighbours"


@dataclass(frozen=True)
class NodeGroups:
    """One way of grouping the nodes: group labels from lowest to highest, and each node's
    group as an index into them (-1: unlabelled, in no group)."""

    grouping: str
    labels: tuple[str, ...]
    of_node: np.ndarray


def node_degrees(data: Data) -> np.ndarray:
    """Edges into each node: the neighbours a message-passing layer averages over."""
    return degree(data.edge_index[1], data.num_nodes).numpy().astype(int)


def quartile_edges(degrees: np.ndarray) -> list[int]:
    """Lowest degree of the second to fourth quartile group; repeated cuts merge groups."""
    cuts = np.quantile(degrees, [0.25, 0.5, 0.75])
    edges = sorted({int(np.floor(cut)) + 1 for cut in cuts})  # a group is d <= cut
    return [edge for edge in edges if degrees.min() < edge <= degrees.max()]


def degree_groups(data: Data, edges: list[int]) -> NodeGroups:
    """Group i holds degrees from edges[i - 1] up to edges[i] - 1; [] means quartiles."""
    return count_groups("degree", node_degrees(data), edges, data.y.numpy() >= 0)


def graph_size_groups(collection: GraphCollection) -> NodeGroups:
    """Graphs of a collection by node-count quartile: where attention wins by graph size."""
    counts = collection.node_counts().numpy().astype(int)
    return count_groups("graph_size", counts, [], np.ones(len(counts), dtype=bool))


def count_groups(
    grouping: str, degrees: np.ndarray, edges: list[int], used: np.ndarray
) -> NodeGroups:
    """Groups of whole counts: group i holds edges[i - 1] up to edges[i] - 1 ([]: quartiles);
    items not `used` are in no group."""
    edges = edges or quartile_edges(degrees)
    lowest = [min(int(degrees.min()), edges[0] - 1) if edges else int(degrees.min()), *edges]
    highest = [edge - 1 for edge in edges] + [int(degrees.max())]
    labels = tuple(
        str(low) if low == high else f"{low}-{high}" if low < high else f"{low}+"
        for low, high in zip(lowest, highest, strict=True)
    )
    of_node = np.searchsorted(np.asarray(edges), degrees, side="right")
    return NodeGroups(grouping, labels, np.where(used, of_node, -1))


def homophily_groups(data: Data, edges: list[float]) -> NodeGroups:
    """Bins of local homophily with the given edges (lower edge included, the last bin also
    its upper edge); nodes without labelled neighbours form a last group of their own."""
    shares = local_homophily(data.edge_index, data.y)
    bins = len(edges) - 1
    found = np.isfinite(shares)
    of_node = np.searchsorted(np.asarray(edges), np.where(found, shares, 0), side="right") - 1
    of_node = np.where(found, np.minimum(of_node, bins - 1), bins)
    of_node = np.where(data.y.numpy() >= 0, of_node, -1)
    labels = tuple(
        f"{bin_edge(low)}-{bin_edge(high)}" for low, high in zip(edges, edges[1:], strict=False)
    )
    return NodeGroups("local_homophily", (*labels, NO_LABELLED_NEIGHBOURS), of_node)


def node_groups(
    data: Data | GraphCollection, settings: Analysis = DEFAULT_ANALYSIS
) -> list[NodeGroups]:
    """The degree and local-homophily groups of a graph under the suite's bin edges; the
    graphs of a collection by size."""
    if isinstance(data, GraphCollection):
        return [graph_size_groups(data)]
    return [
        degree_groups(data, list(settings.degree_edges)),
        homophily_groups(data, list(settings.local_homophily_edges)),
    ]


def bin_edge(value: float) -> str:
    """0.2 as `0.2`, 1 as `1.0`: every edge with a decimal point."""
    text = f"{value:g}"
    return text if "." in text else f"{value:.1f}"
