"""Graph classification: one class per graph of a collection (molecules, circuits, bundles of
transfers); metrics accuracy, macro_f1, roc_auc (one-vs-rest), average_precision.

Every contender is the encoder of a graph-level model: its node layers, then a readout that
pools each graph's node states (the contender's `readout`), then a linear classifier. Its own
suite table is `[graphs]` (GraphOptions). Node-level parts (the homophily map, arrival of new
nodes, sampled node batches, the per-node breakdown) do not apply; the breakdown is per graph.
"""

from __future__ import annotations

from pydantic import Field

from harness.schema.base import StrictModel
from harness.schema.tasks.declaration import Metric, TaskKind


class GraphOptions(StrictModel):
    """How a graph suite batches its graphs."""

    batch_size: int = Field(
        64, ge=1, le=1_000_000, description="Graphs per training step (PyG's DataLoader)."
    )
    evaluation_batch_size: int = Field(
        512, ge=1, le=1_000_000, description="Graphs per step when validating and testing."
    )


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
    data_check="harness.execution.preflight:check_graph_splits",
    split_methods=("fractions", "column", "scaffold", "size"),
    refused={
        "homophily_map": "the homophily map varies node labels of one graph; graph "
        "classification labels whole graphs",
    },
    options_section="graphs",
    options=GraphOptions,
    sampled_batches=False,
    compiles=False,
    no_compile_reason="graph classification trains eagerly: every batch of graphs has "
    "another shape",
    breakdown=False,
    node_labels=False,
    many_graphs=True,
)
