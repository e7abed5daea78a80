"""Checks that need the data: run by `heedful check` and before `heedful run`."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from torch_geometric.data import Data

from harness.data import load_graph
from harness.data.assemble import cleaning_notes, edge_count
from harness.data.feature_starts import check_contender_graphs
from harness.data.homophily import measure_homophily
from harness.data.inductive_edges import EDGE_SPLITS
from harness.data.splits import make_split
from harness.errors import InputError
from harness.execution.memory import GraphSize
from harness.planning import design_points
from harness.schema.suite import Suite
from harness.schema.tasks import task_kind
from harness.schema.tasks.declaration import imported


@dataclass(frozen=True)
class DataFacts:
    """Size of the graph and its measured homophily (labelled edges only, PyG's homophily())."""

    nodes: int
    edges: int
    classes: int
    features: int
    edge_homophily: float  # Zhu et al. (2020)
    node_homophily: float  # Pei et al. (2020)
    notes: tuple[str, ...] = ()  # self-loops and repeated edges removed on load

    @property
    def size(self) -> GraphSize:
        return GraphSize(self.nodes, 2 * self.edges, self.features, self.classes)


def check_node_splits(suite: Suite, data: Data, source: str) -> None:
    """Two label classes, and every seed's node split (ROC-AUC needs two classes in test)."""
    labelled = data.y[data.y >= 0]
    if len(np.unique(labelled.numpy())) < 2:
        raise InputError(f"{source}: data: fewer than two label classes; allowed: two or more")
    for seed in suite.seed_list:
        try:
            split = make_split(data, suite.split, seed)
        except InputError as error:
            raise InputError(f"{source}: {error}") from None
        if suite.metric == "roc_auc" and len(np.unique(data.y[split.test].numpy())) < 2:
            raise InputError(
                f"{source}: metric: 'roc_auc' is not defined when the test split of seed {seed} "
                "holds one class; allowed: accuracy or macro_f1, or a larger test split"
            )


def check_edge_splits(suite: Suite, data: Data, source: str) -> None:
    """Every seed's edge split: enough edges for each share and enough non-edges."""
    for seed in suite.seed_list:
        try:
            EDGE_SPLITS[suite.setting](data, suite.split, suite.link_options, seed)
        except InputError as error:
            raise InputError(f"{source}: {error}") from None


def preflight(suite: Suite, source: str) -> DataFacts:
    """Load the graph and draw every seed's split; errors name the suite file and key."""
    data = load_graph(suite.data)
    classes = int(data.y.max()) + 1
    imported(task_kind(suite.task).data_check)(suite, data, source)
    check_contender_graphs(design_points(suite), data, suite.hops.memory_budget_mb, source)
    measured = measure_homophily(data.edge_index, data.y)
    return DataFacts(
        data.num_nodes,
        edge_count(data),
        classes,
        data.num_features,
        measured.edge,
        measured.node,
        tuple(cleaning_notes(data, f"{source}: data")) + unused_label_notes(suite, source),
    )


def unused_label_notes(suite: Suite, source: str) -> tuple[str, ...]:
    """A warning when a suite whose task reads no node labels names a label column."""
    kind = task_kind(suite.task)
    if not kind.node_labels and "label_column" in suite.data.model_fields_set:
        return (
            f"{source}: data.label_column: warning: {kind.title} uses no node labels; "
            "the column only feeds the data profile",
        )
    return ()
