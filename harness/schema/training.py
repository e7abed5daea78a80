"""Training settings: suite defaults, optionally overridden per contender."""

from __future__ import annotations

from typing import ClassVar, Literal

from pydantic import Field

from harness.schema.base import StrictModel

CompileMode = Literal["auto"] | bool


class Training(StrictModel):
    """Full-batch training with Adam and early stopping on the validation metric.

    `compile`: "auto" compiles the model with torch.compile when the graph is large enough for
    the compile to pay back within the run's epochs (harness.planning resolves it to true or
    false before run keys are taken), true always compiles, false never does.
    """

    keyed_when_set: ClassVar[frozenset[str]] = frozenset({"compile"})
    # eager training is what every run did before compiling existed: it keeps their keys
    unkeyed_values: ClassVar[dict[str, tuple]] = {"compile": (False,)}

    epochs: int = Field(200, ge=1, le=100_000)
    patience: int = Field(50, ge=1, le=100_000)
    learning_rate: float = Field(0.01, gt=0, le=1)
    weight_decay: float = Field(5e-4, ge=0, le=1)
    compile: CompileMode = "auto"


class TrainingOverride(StrictModel):
    """Per-contender changes to the suite's training defaults; unset keys keep the default."""

    epochs: int | None = Field(None, ge=1, le=100_000)
    patience: int | None = Field(None, ge=1, le=100_000)
    learning_rate: float | None = Field(None, gt=0, le=1)
    weight_decay: float | None = Field(None, ge=0, le=1)
    compile: CompileMode | None = None

    def apply(self, defaults: Training) -> Training:
        changes = {k: v for k, v in self.model_dump().items() if v is not None}
        return defaults.model_copy(update=changes)
