"""Checks that need the data: run by `heedful check` and before `heedful run`."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from torch_geometric.data import Data

from harness.data import load_graph
from harness.data.assemble import cleaning_notes, edge_count, require_labels
from harness.data.collection import GraphCollection
from harness.data.edge_splits import EdgeSplit
from harness.data.feature_starts import check_contender_graphs
from harness.data.homophily import measure_homophily
from harness.data.inductive_edges import EDGE_SPLITS
from harness.data.splits import make_split
from harness.errors import InputError
from harness.execution.graph_preflight import (
    batch_size_of,
    check_collection_graphs,
    collection_notes,
)
from harness.execution.memory import GraphSize
from harness.planning import design_points, expand
from harness.planning.run_choices import COMPILE_MIN_EDGES, compile_pays_back, resolve_kernel
from harness.schema.named import imported
from harness.schema.suite import Suite
from harness.schema.tasks import task_kind


@dataclass(frozen=True)
class DataFacts:
    """Size of the graph and its measured homophily (labelled edges only, PyG's homophily())."""

    nodes: int
    edges: int
    classes: int | None  # None, as the homophily: the task reads no node labels
    features: int
    edge_homophily: float | None  # Zhu et al. (2020)
    node_homophily: float | None  # Pei et al. (2020)
    notes: tuple[str, ...] = ()  # self-loops and repeated edges removed on load
    warnings: tuple[str, ...] = ()  # settings that will cost more than they give
    step_size: GraphSize | None = None  # what one step holds, when less than the whole graph

    @property
    def size(self) -> GraphSize:
        """What a training step holds: the whole graph, or the largest batch of graphs."""
        whole = GraphSize(self.nodes, 2 * self.edges, self.features, self.classes or 0)
        return self.step_size or whole


def check_node_splits(suite: Suite, data: Data, source: str) -> None:
    """Two label classes, and every seed's node split (ROC-AUC needs two classes in test)."""
    require_labels(data)
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
            split = EDGE_SPLITS[suite.setting](data, suite.split, suite.task_options, seed)
        except InputError as error:
            raise InputError(f"{source}: {error}") from None
        if suite.metric == "hits_at_k":
            check_hits_k(suite.task_options.hits_k, split, seed, source)


def check_hits_k(hits_k: int, split: EdgeSplit, seed: int, source: str) -> None:
    """Hits@K counts every edge as a hit when K reaches the negatives: a score of 1.000 that
    says nothing (OGB's evaluator, which ours follows, does the same)."""
    for part, labels in (("validation", split.validation_labels), ("test", split.test_labels)):
        negatives = int((labels < 0.5).sum())
        if hits_k >= negatives:
            raise InputError(
                f"{source}: link.hits_k: given {hits_k}, but the {part} pairs of seed {seed} "
                f"hold {negatives} negatives, so every {part} edge would count as a hit; "
                f"allowed: K below {negatives} (or more negatives_per_positive)"
            )


def preflight(suite: Suite, source: str) -> DataFacts:
    """Load the graph and draw every seed's split; errors name the suite file and key."""
    data = load_graph(suite.data)
    labels = task_kind(suite.task).node_labels
    imported(task_kind(suite.task).data_check)(suite, data, source)
    if suite.data.many_graphs:
        return collection_facts(suite, data, source)
    check_contender_graphs(design_points(suite), data, suite.hops.memory_budget_mb, source)
    measured = measure_homophily(data.edge_index, data.y) if labels else None
    return DataFacts(
        data.num_nodes,
        edge_count(data),
        int(data.y.max()) + 1 if labels else None,
        data.num_features,
        measured.edge if measured else None,
        measured.node if measured else None,
        tuple(cleaning_notes(data, f"{source}: data")) + task_notes(suite, source),
        compile_warnings(suite, data.edge_index.size(1), source),
    )


def collection_facts(suite: Suite, collection: GraphCollection, source: str) -> DataFacts:
    """Facts of a collection of graphs: totals, graph classes, and the largest batch a step
    holds as the size memory is estimated for."""
    check_collection_graphs(suite, collection, source)
    return DataFacts(
        int(collection.node_counts().sum()),
        int(collection.edge_counts().sum()) // 2,
        len(collection.class_names),
        collection.storage.x.size(1),
        None,
        None,
        collection_notes(collection, source) + task_notes(suite, source),
        step_size=batch_size_of(suite, collection),
    )


def compile_warnings(suite: Suite, edges: int, source: str) -> tuple[str, ...]:
    """One line per contender told `compile = true` on a graph too small for compiling to pay
    back within its epochs: it will train slower than eager, not faster."""
    if not task_kind(suite.task).compiles:
        return ()
    lines = {}
    for design in design_points(suite):
        training = resolve_kernel(
            design.options.training.apply(suite.training), design.options, suite.data
        )
        model = design.options.model
        pays = compile_pays_back(model, edges, training.epochs, training.kernel)
        if training.compile is True and not pays:
            lines[design.contender] = (
                f"{source}: contenders.{design.contender}: warning: compile = true on "
                f"{edges:,} directed edges for {training.epochs} epochs will not pay back: "
                f"compiling takes tens of seconds per run and saves little below "
                f'{COMPILE_MIN_EDGES:,} edges; compile = "auto" compiles only where it pays'
            )
    return tuple(lines.values())


def task_notes(suite: Suite, source: str) -> tuple[str, ...]:
    """Warnings from what the task declares: a label column its runs never read, compiling
    asked for where it does not apply."""
    kind = task_kind(suite.task)
    notes = []
    if not (kind.node_labels or kind.many_graphs) and "label_column" in suite.data.model_fields_set:
        notes.append(
            f"{source}: data.label_column: warning: {kind.title} uses no node labels; "
            "the column only feeds the data profile"
        )
    if not kind.compiles and any(spec.training.compile is True for spec in expand(suite)):
        notes.append(f"{source}: training.compile: warning: {kind.no_compile_reason}")
    return tuple(notes)
