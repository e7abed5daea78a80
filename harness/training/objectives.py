"""What the one training loop asks of a task's objective, and what a task's run setup hands it.

An objective says what is minimised each epoch, how validation is scored every epoch and what
a finished run scores; a feed (harness.training.feeding) says what each step trains on. The
loop (harness.training.loop) knows neither the task nor the batching. Each objective lives in
its own module and is registered by name in harness.training.runs.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, Protocol

import torch
from torch import nn

from harness.results import NodePredictions
from harness.training.compiled import Forward
from harness.training.feeding import Feed, Step

Loss = Callable[[nn.Module, Step], torch.Tensor]


@dataclass(frozen=True)
class Scores:
    """A finished run's figures: the suite's `metric` on validation, every metric of the task on
    the test set, extras the objective records (e.g. warnings) and test-node predictions."""

    metric: str
    validation: float
    test: dict[str, float]
    extras: dict[str, Any] = field(default_factory=dict)
    predictions: NodePredictions | None = None


class Objective(Protocol):
    """A task's training objective, as the loop calls it."""

    def epoch_loss(self) -> Loss:
        """The loss of this epoch's steps (link prediction draws fresh negatives for it)."""
        ...

    def validate(self, network: nn.Module) -> float:
        """The suite's metric on validation (called every epoch, evaluation mode, no grad)."""
        ...

    def target_bytes(self) -> int:
        """Bytes of targets a training step holds besides its feed's inputs."""
        ...

    def scores(self, forward: Forward) -> Scores:
        """Figures of the trained model (best weights restored), run through `forward`."""
        ...


@dataclass(frozen=True)
class Prepared:
    """One run set up for the loop: its model, feed and objective, and the diagnostics to take
    from the trained model (extras such as attention measures)."""

    model: nn.Module
    feed: Feed
    objective: Objective
    diagnose: Callable[[], dict[str, Any]]
