"""Turn loaded arrays into the graph every source returns, reporting what had to be cleaned.

Every graph: float features `x`, coalesced `edge_index` without self-loops (undirected unless a
table says otherwise), labels `y` (-1 unlabelled). Self-loops and repeated edges are removed and
counted in `self_loops_removed` and `duplicate_edges_removed`, not treated as errors.
"""

from __future__ import annotations

import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import coalesce, to_undirected

from harness.errors import InputError

# Values a split column may hold; anything else is an error, empty cells are "not used".
SPLIT_PARTS = {"train": 0, "validation": 1, "test": 2}


def count_repeats(source: np.ndarray, target: np.ndarray, nodes: int, unordered: bool) -> int:
    """Edges naming a pair an earlier edge named; with `unordered`, (a, b) repeats (b, a)."""
    low, high = (
        (np.minimum(source, target), np.maximum(source, target))
        if unordered
        else (
            source,
            target,
        )
    )
    pair_codes = low.astype(np.int64) * nodes + high.astype(np.int64)
    return int(len(pair_codes) - len(np.unique(pair_codes)))


def assemble(
    x: np.ndarray,
    source: np.ndarray,
    target: np.ndarray,
    y: np.ndarray,
    *,
    directed: bool = False,
    unordered_repeats: bool = True,
    weight: np.ndarray | None = None,
    edge_attr: np.ndarray | None = None,
    split_part: np.ndarray | None = None,
    class_names: list[str] | None = None,
    node_ids: list[str] | None = None,
) -> Data:
    """The cleaned graph. `unordered_repeats`: count (b, a) after (a, b) as a repeat (tables
    list each undirected edge once); PyG-style sources list both directions, so they pass False.
    Repeated edges keep the mean of their weights and attributes; an undirected edge gives
    both directions its row's attributes.
    """
    nodes = len(x)
    loops = source == target
    source, target = source[~loops], target[~loops]
    repeats = count_repeats(source, target, nodes, unordered_repeats and not directed)
    edge_index = torch.from_numpy(np.stack([source, target]).astype(np.int64))
    per_edge = [
        torch.from_numpy(np.ascontiguousarray(values[~loops], dtype=np.float32))
        for values in (weight, edge_attr)
        if values is not None
    ]
    tidy = coalesce if directed else to_undirected
    edge_index, per_edge = tidy(edge_index, per_edge, nodes, reduce="mean")
    edge_weight = per_edge[0] if weight is not None else None
    data = Data(
        x=torch.from_numpy(np.ascontiguousarray(x, dtype=np.float32)),
        edge_index=edge_index,
        y=torch.from_numpy(y.astype(np.int64)),
        num_nodes=nodes,
    )
    if edge_weight is not None:
        data.edge_weight = edge_weight
    if edge_attr is not None:
        data.edge_attr = per_edge[-1]
    if split_part is not None:
        data.split_part = torch.from_numpy(split_part.astype(np.int64))
    data.class_names = class_names or [str(c) for c in range(int(y.max()) + 1)]
    if node_ids is not None:
        data.node_ids = node_ids
    data.self_loops_removed = int(loops.sum())
    data.duplicate_edges_removed = repeats
    return data


def require_labels(data: Data) -> None:
    """For tasks that read node labels: the labels a source could not give are an error
    (a table without its label column, or with one class)."""
    problem = getattr(data, "label_problem", None)
    if problem:
        raise InputError(problem)


def node_name(data: Data, position: int) -> str:
    """A node as its source names it: its id in a table's id column, else its position."""
    ids = getattr(data, "node_ids", None)
    return f"node {position}" if ids is None else f"node id {ids[position]!r}"


def too_few_non_edges(ratio: int, where: str, edge: str) -> str:
    """Why negatives could not be drawn, and what would help: fewer per edge only above one."""
    helps = "fewer" if ratio > 1 else "a sparser graph, or smaller validation and test shares"
    return (
        f"link.negatives_per_positive: given {ratio}; {where} too few non-edges for "
        f"{ratio} negative{'s' if ratio > 1 else ''} per {edge}; allowed: {helps}"
    )


def edge_count(data: Data) -> int:
    """Edges as the data means them: an undirected edge (stored both ways) once, a directed one
    once per direction."""
    return data.edge_index.size(1) // (2 if data.is_undirected() else 1)


def cleaning_notes(data: Data, where: str) -> list[str]:
    """One line per cleaning step that changed the graph, for `heedful check` and profiles."""
    notes = []
    if getattr(data, "self_loops_removed", 0):
        notes.append(f"{where}: {data.self_loops_removed} self-loops removed")
    if getattr(data, "duplicate_edges_removed", 0):
        notes.append(f"{where}: {data.duplicate_edges_removed} repeated edges removed")
    return notes
