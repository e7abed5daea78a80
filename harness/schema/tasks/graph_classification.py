"""Graph classification: one class per graph of a collection (molecules, circuits, bundles of
transfers); metrics accuracy, macro_f1, roc_auc (one-vs-rest), average_precision.

Every contender is the encoder of a graph-level model: its node layers, then a readout that
pools each graph's node states (the contender's `readout`), then a linear classifier. Its own
suite table is `[graphs]` (GraphOptions). Node-level parts (the homophily map, arrival of new
nodes, sampled node batches) do not apply; the breakdown groups the test graphs by size.
"""

from __future__ import annotations

from typing import Any, get_args

from pydantic import Field

from harness.schema.base import StrictModel
from harness.schema.contenders import FeatureStart
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.tasks.declaration import Metric, TaskKind


class GraphOptions(StrictModel):
    """How a graph suite batches its graphs."""

    batch_size: int = Field(
        64, ge=1, le=1_000_000, description="Graphs per training step (PyG's DataLoader)."
    )
    evaluation_batch_size: int = Field(
        512, ge=1, le=1_000_000, description="Graphs per step when validating and testing."
    )


# feature starts of one graph's nodes: a learned row per node id, and eigenvectors that would
# mix the graphs of a collection (eigenvalues repeat across its disconnected graphs)
FEATURE_STARTS = get_args(FeatureStart)
ONE_GRAPH_STARTS = {
    "identity": "a learned row per node id, which graphs of a collection do not share",
    "laplacian": "Laplacian eigenvectors of a collection mix its graphs; random_walk is per graph",
}


def start_problem(contender: str, start: str) -> str | None:
    reason = ONE_GRAPH_STARTS.get(start)
    if reason is None:
        return None
    allowed = ", ".join(s for s in FEATURE_STARTS if s not in ONE_GRAPH_STARTS)
    return f"{contender}.feature_start: given '{start}' ({reason}); allowed: {allowed}"


def contender_problems(contenders: dict[str, Any]) -> str | None:
    """Feature starts of one graph, and kinds whose layers attend over every node of a graph:
    over a batch of graphs they would attend across graphs."""
    for name, options in contenders.items():
        if problem := start_problem(name, options.feature_start):
            return problem
        if MODEL_KINDS[options.model].global_reach:
            return (
                f"{name}.model: given '{options.model}', whose layers attend over every node of "
                "a graph; over a batch of graphs they would mix graphs; allowed for graph "
                "classification: kinds that pass messages along edges"
            )
    return None


def starts_of_ablation(ablation: dict[str, Any]) -> str | None:
    for name, grid in ablation.items():
        for start in grid.axes.get("feature_start", []):
            if problem := start_problem(f"{name}.axes", start):
                return problem
    return None


def node_groupings(analysis: Any) -> str | None:
    """The per-graph breakdown groups graphs by size; the node groupings' edges do not apply."""
    for key in ("degree_edges", "local_homophily_edges"):
        if key in analysis.model_fields_set:
            return (
                f"{key} groups the nodes of one graph; graph classification breaks down by "
                "graph size (node-count quartiles); allowed: leave it out"
            )
    return None


NODE_SCORES = "harness.schema.tasks.node_scores"
GRAPH_SCORES = "harness.schema.tasks.graph_scores"

GRAPH_CLASSIFICATION = TaskKind(
    title="graph classification",
    summary="one class per graph of a collection",
    metrics=(
        Metric("accuracy", "accuracy", f"{NODE_SCORES}:accuracy"),
        Metric("macro_f1", "macro-F1", f"{NODE_SCORES}:macro_f1"),
        Metric("roc_auc", "ROC-AUC", f"{NODE_SCORES}:roc_auc"),
        Metric("average_precision", "average precision", f"{GRAPH_SCORES}:average_precision"),
    ),
    default_metric="accuracy",
    objective="graph_loss",
    data_check="harness.execution.graph_preflight:check_graph_splits",
    split_methods=("fractions", "column", "scaffold", "size"),
    refused={
        "homophily_map": "the homophily map varies node labels of one graph; graph "
        "classification labels whole graphs",
    },
    section_checks={
        "contenders": contender_problems,
        "ablation": starts_of_ablation,
        "analysis": node_groupings,
    },
    options_section="graphs",
    options=GraphOptions,
    sampled_batches=False,
    compiles=False,
    no_compile_reason="graph classification trains eagerly: every batch of graphs has "
    "another shape",
    node_labels=False,
    many_graphs=True,
)
