"""Training settings: suite defaults, optionally overridden per contender."""

from __future__ import annotations

from pydantic import Field

from harness.schema.base import StrictModel


class Training(StrictModel):
    """Full-batch training with Adam and early stopping on the validation metric."""

    epochs: int = Field(200, ge=1, le=100_000)
    patience: int = Field(50, ge=1, le=100_000)
    learning_rate: float = Field(0.01, gt=0, le=1)
    weight_decay: float = Field(5e-4, ge=0, le=1)


class TrainingOverride(StrictModel):
    """Per-contender changes to the suite's training defaults; unset keys keep the default."""

    epochs: int | None = Field(None, ge=1, le=100_000)
    patience: int | None = Field(None, ge=1, le=100_000)
    learning_rate: float | None = Field(None, gt=0, le=1)
    weight_decay: float | None = Field(None, ge=0, le=1)

    def apply(self, defaults: Training) -> Training:
        changes = {k: v for k, v in self.model_dump().items() if v is not None}
        return defaults.model_copy(update=changes)
