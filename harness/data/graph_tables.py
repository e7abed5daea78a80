"""Many graphs from three tables joined by a graph-id column: nodes, edges and graphs.

Checked column-wise like the single-graph tables (data/tables.py): every error names the file
and the row. Node ids need only be unique within their graph; an edge must join two nodes of
the graph it names.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import torch
from sklearn.preprocessing import StandardScaler
from torch_geometric.utils import coalesce, remove_self_loops, to_undirected

from harness.data.collection import GraphCollection, from_flat
from harness.data.graph_labels import graph_label_codes, graph_split_codes
from harness.data.tables import (
    feature_matrix,
    feature_names,
    need_columns,
    no_missing,
    read_table,
    row_name,
    shown,
)
from harness.errors import InputError
from harness.schema.graph_data import GraphTablesData


def first_repeat(frame: pd.DataFrame, columns: list[str]) -> int | None:
    repeated = frame.duplicated(columns).to_numpy()
    return int(np.argmax(repeated)) if repeated.any() else None


def graph_positions(values: pd.Series, graphs: pd.Index, path: str, column: str) -> np.ndarray:
    """Each row's graph as a position in the graphs table; unknown ids are errors."""
    no_missing(values, path, f"graph id (column '{column}')")
    positions = graphs.get_indexer(values)
    if (positions < 0).any():
        row = int(np.argmax(positions < 0))
        raise InputError(
            f"{row_name(path, row)}: graph {values.iloc[row]!r} (column '{column}') is not in the "
            "graphs table; allowed: ids listed there"
        )
    return positions.astype(np.int64)


def read_graphs(spec: GraphTablesData) -> tuple[pd.DataFrame, pd.Index]:
    graphs = read_table(spec.graphs, "one row per graph", [spec.graph_column])
    columns = [spec.graph_column, spec.label_column] + [c for c in [spec.split_column] if c]
    for column, key in zip(columns, ["graph_column", "label_column", "split_column"], strict=False):
        need_columns(graphs, spec.graphs, [column], key)
    no_missing(graphs[spec.graph_column], spec.graphs, f"graph id (column '{spec.graph_column}')")
    row = first_repeat(graphs, [spec.graph_column])
    if row is not None:
        raise InputError(
            f"{row_name(spec.graphs, row)}: graph {graphs[spec.graph_column].iloc[row]!r} is "
            f"listed twice; allowed: one row per graph in column '{spec.graph_column}'"
        )
    return graphs, pd.Index(graphs[spec.graph_column])


def read_nodes(spec: GraphTablesData, graph_ids: pd.Index) -> tuple[pd.DataFrame, np.ndarray]:
    """Nodes sorted by graph (stable), with each node's graph position."""
    nodes = read_table(spec.nodes, "one row per node", [spec.graph_column, spec.id_column])
    need_columns(nodes, spec.nodes, [spec.graph_column], "graph_column")
    need_columns(nodes, spec.nodes, [spec.id_column], "id_column")
    no_missing(nodes[spec.id_column], spec.nodes, f"node id (column '{spec.id_column}')")
    graph = graph_positions(nodes[spec.graph_column], graph_ids, spec.nodes, spec.graph_column)
    row = first_repeat(nodes, [spec.graph_column, spec.id_column])
    if row is not None:
        raise InputError(
            f"{row_name(spec.nodes, row)}: node {nodes[spec.id_column].iloc[row]!r} repeats in "
            f"graph {nodes[spec.graph_column].iloc[row]!r}; allowed: ids unique within a graph"
        )
    empty = np.flatnonzero(np.bincount(graph, minlength=len(graph_ids)) == 0)
    if len(empty):
        raise InputError(
            f"{row_name(spec.graphs, int(empty[0]))}: graph {graph_ids[empty[0]]!r} has no "
            f"nodes in {shown(spec.nodes)}; allowed: every graph with one node or more"
        )
    order = np.argsort(graph, kind="stable")
    return nodes.iloc[order].reset_index(drop=True), graph[order]


def edge_endpoints(spec: GraphTablesData, nodes: pd.DataFrame, graph_ids: pd.Index) -> np.ndarray:
    """Global node positions (2, edges) of each edge's endpoints, within the edge's graph."""
    edges = read_table(
        spec.edges,
        "one row per edge",
        [spec.graph_column, spec.source_column, spec.target_column],
    )
    for column, key in (
        (spec.graph_column, "graph_column"),
        (spec.source_column, "source_column"),
        (spec.target_column, "target_column"),
    ):
        need_columns(edges, spec.edges, [column], key)
    graph_positions(edges[spec.graph_column], graph_ids, spec.edges, spec.graph_column)
    index = pd.MultiIndex.from_arrays([nodes[spec.graph_column], nodes[spec.id_column]])
    ends = []
    for role, column in (("source", spec.source_column), ("target", spec.target_column)):
        no_missing(edges[column], spec.edges, f"{role} (column '{column}')")
        wanted = pd.MultiIndex.from_arrays([edges[spec.graph_column], edges[column]])
        positions = index.get_indexer(wanted)
        if (positions < 0).any():
            row = int(np.argmax(positions < 0))
            raise InputError(
                f"{row_name(spec.edges, row)}: {role} {edges[column].iloc[row]!r} is not a node "
                f"of graph {edges[spec.graph_column].iloc[row]!r} in {shown(spec.nodes)}; "
                "allowed: node ids of the edge's own graph"
            )
        ends.append(positions)
    return np.stack(ends).astype(np.int64)


def load_graph_tables(spec: GraphTablesData) -> GraphCollection:
    """The graphs of three tables, labelled; errors name the file and row."""
    graphs, graph_ids = read_graphs(spec)
    labels, class_names = graph_label_codes(
        graphs[spec.label_column], spec.label_column, spec.graphs
    )
    nodes, node_graph = read_nodes(spec, graph_ids)
    names = feature_names(nodes.drop(columns=[spec.graph_column]), spec)
    features = feature_matrix(nodes, names, spec.nodes)
    if spec.standardise:
        features = StandardScaler().fit_transform(features).astype(np.float32)
    edge_index = torch.from_numpy(edge_endpoints(spec, nodes, graph_ids))
    edge_index, _ = remove_self_loops(edge_index)
    if spec.directed:
        edge_index = coalesce(edge_index, num_nodes=len(nodes))
    else:
        edge_index = to_undirected(edge_index, num_nodes=len(nodes))
    split_part = None
    if spec.split_column:
        split_part = torch.from_numpy(
            graph_split_codes(graphs[spec.split_column], spec.split_column, spec.graphs)
        )
    return from_flat(
        torch.from_numpy(features),
        edge_index,
        torch.from_numpy(labels),
        torch.from_numpy(node_graph),
        class_names,
        split_part=split_part,
        split_origin=f"{shown(spec.graphs)}: column '{spec.split_column}'",
        feature_names=tuple(names),
    )
