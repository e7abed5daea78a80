"""Checks and facts of a collection of graphs (graph classification), run by `heedful check`
and before `heedful run`: every seed's split, and the sizes a memory estimate needs."""

from __future__ import annotations

import numpy as np
import torch

from harness.data.collection import GraphCollection
from harness.data.feature_starts import check_contender_graphs
from harness.data.graph_splits import make_graph_split
from harness.data.graph_starts import as_one_graph
from harness.errors import InputError
from harness.execution.memory import GraphSize
from harness.planning import design_points
from harness.schema.suite import Suite

# metrics that need both outcomes among the test graphs
NEEDS_TWO_CLASSES = ("roc_auc", "average_precision")


def check_graph_splits(suite: Suite, collection: GraphCollection, source: str) -> None:
    """Every seed's split of the graphs; ROC-AUC and average precision need two classes in test."""
    for seed in suite.seed_list:
        try:
            split = make_graph_split(collection, suite.split, seed)
        except InputError as error:
            raise InputError(f"{source}: {error}") from None
        classes = np.unique(collection.y[split.test].numpy())
        if suite.metric in NEEDS_TWO_CLASSES and len(classes) < 2:
            raise InputError(
                f"{source}: metric: '{suite.metric}' is not defined when the test graphs of seed "
                f"{seed} hold one class; allowed: accuracy or macro_f1, or a larger test split"
            )


def largest_batch(collection: GraphCollection, batch_size: int) -> tuple[int, int]:
    """Nodes and directed edges of the largest batch a step can draw: the biggest graphs."""
    nodes = torch.sort(collection.node_counts(), descending=True).values[:batch_size]
    edges = torch.sort(collection.edge_counts(), descending=True).values[:batch_size]
    return int(nodes.sum()), int(edges.sum())


def collection_notes(collection: GraphCollection, source: str) -> tuple[str, ...]:
    """What `check` says of the graphs: count, sizes, classes, scaffolds, rows left out."""
    counts = collection.node_counts().numpy()
    shares = np.bincount(collection.y.numpy(), minlength=len(collection.class_names))
    balance = ", ".join(
        f"{name} {count}" for name, count in zip(collection.class_names, shares, strict=True)
    )
    notes = [
        f"{source}: data: {len(collection):,} graphs of {counts.min()} to {counts.max()} nodes "
        f"(median {np.median(counts):g}); classes: {balance}"
    ]
    if collection.scaffolds is not None:
        distinct = len(set(collection.scaffolds))
        notes.append(f"{source}: data: {distinct:,} distinct Bemis-Murcko scaffolds")
    if collection.skipped:
        notes.append(
            f"{source}: data: {len(collection.skipped):,} rows skipped, the first: "
            f"{collection.skipped[0]}"
        )
    return tuple(notes)


def check_collection_graphs(suite: Suite, collection: GraphCollection, source: str) -> None:
    """Hop memory budgets and eigenvector counts, on the collection as one graph."""
    whole = as_one_graph(collection)
    check_contender_graphs(design_points(suite), whole, suite.hops.memory_budget_mb, source)


def batch_size_of(suite: Suite, collection: GraphCollection) -> GraphSize:
    """The size a training step holds: the largest batch of graphs."""
    nodes, edges = largest_batch(collection, suite.task_options.batch_size)
    features = collection.storage.x.size(1)
    return GraphSize(nodes, edges, features, len(collection.class_names))
