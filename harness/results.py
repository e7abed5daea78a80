"""What a run gives back, as plain values (numpy, no torch): the stored figures of one run and
the class probabilities of its test nodes. Training makes them; storage, analysis and reports
read them without importing the training stage."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np


@dataclass(frozen=True)
class NodePredictions:
    """Class probabilities (one row per node) of some nodes of a graph of `graph_nodes`."""

    nodes: np.ndarray
    probabilities: np.ndarray
    graph_nodes: int

    def as_dict(self) -> dict[str, list]:
        return {
            "nodes": self.nodes.tolist(),
            "probabilities": self.probabilities.astype(float).round(4).tolist(),
        }


@dataclass(frozen=True)
class RunResult:
    """What one run measured, with the best epoch's weights restored: `val_metric` and
    `test_metric` are the suite's metric, `test_scores` every metric of the task on the test
    set (NaN without one, as while tuning), `peak_mb` a training step's tensor memory
    (harness.training.resources.step_peak_mb)."""

    val_metric: float
    test_metric: float
    test_scores: dict[str, float]
    epochs: int
    best_epoch: int
    seconds: float
    seconds_per_epoch: float
    params: int
    peak_mb: float
    curve: list[float] = field(default_factory=list)
    extras: dict[str, Any] = field(default_factory=dict)
    compiled: bool = False  # whether training ran compiled to the end (no fall-back)
    predictions: NodePredictions | None = None  # of the test nodes, for the per-node breakdown
