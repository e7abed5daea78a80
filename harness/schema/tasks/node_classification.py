"""Node classification: one class per node; metrics accuracy, macro_f1, roc_auc (one-vs-rest).

The task Heedful started with: its run keys and baseline hashes do not name it (`keyed=False`),
so runs stored before tasks existed keep their keys.
"""

from __future__ import annotations

from harness.schema.tasks.declaration import Metric, TaskKind

SCORES = "harness.schema.tasks.node_scores"
EVERY_EPOCH = "harness.training.metrics"  # torch twins on the logits

NODE_CLASSIFICATION = TaskKind(
    title="node classification",
    edge_attributes=True,
    summary="one class per node",
    metrics=(
        Metric("accuracy", "accuracy", f"{SCORES}:accuracy", f"{EVERY_EPOCH}:fast_accuracy"),
        Metric("macro_f1", "macro-F1", f"{SCORES}:macro_f1", f"{EVERY_EPOCH}:fast_macro_f1"),
        Metric("roc_auc", "ROC-AUC", f"{SCORES}:roc_auc"),
    ),
    default_metric="accuracy",
    objective="node_loss",
    data_check="harness.execution.preflight:check_node_splits",
    split_methods=("fractions", "per_class", "column"),
    keyed=False,
)
