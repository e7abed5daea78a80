"""Training settings: suite defaults, optionally overridden per contender."""

from __future__ import annotations

from typing import Annotated, ClassVar, Literal

from pydantic import Field, field_validator

from harness.schema.base import StrictModel

Batching = Literal["full", "sampled"]
CompileMode = Literal["auto"] | bool
Kernel = Literal["auto", "sparse", "scatter"]
COMPILE_ALLOWED = 'allowed: "auto", true or false (without quotes)'


def compile_mode(value: object) -> object:
    """Only "auto", true or false: pydantic would read "yes" and 1 as true."""
    if value is None or value == "auto" or isinstance(value, bool):
        return value
    raise ValueError(COMPILE_ALLOWED)


# neighbours drawn per layer, first layer first; "all" keeps every neighbour
Fanout = list[Annotated[int, Field(ge=1, le=100_000)]] | Literal["all"]


class Training(StrictModel):
    """Adam with early stopping on the validation metric, on the full graph at every step
    (`batching = "full"`) or on neighbour-sampled batches of `batch_size` target nodes
    (`batching = "sampled"`, `fanout` neighbours per layer).

    `compile`: "auto" compiles a full-batch run's model with torch.compile when the graph is
    large enough for the compile to pay back within the run's epochs (harness.planning resolves
    it to true or false before run keys are taken), true compiles, false never does. Sampled
    runs are not compiled: every batch has another shape.

    `kernel`: how attention layers compute: "scatter" (PyG's layers, per-edge messages),
    "sparse" (harness.models.sparse_layers: CSR products and segment softmax), or "auto": sparse
    where a step's edges are many enough for it to pay (harness.planning resolves it, as
    `compile`); kinds without a sparse kernel always scatter.
    """

    keyed_when_set: ClassVar[frozenset[str]] = frozenset(
        {"batching", "batch_size", "fanout", "compile", "kernel"}
    )
    # eager training and the scatter kernel are what every run did before these options
    # existed: they keep their keys
    unkeyed_values: ClassVar[dict[str, tuple]] = {"compile": (False,), "kernel": ("scatter",)}

    epochs: int = Field(200, ge=1, le=100_000, description="Most epochs a run trains.")
    patience: int = Field(
        50,
        ge=1,
        le=100_000,
        description=(
            "Epochs without a better validation score before training stops; the best"
            " epoch's weights are kept."
        ),
    )
    learning_rate: float = Field(0.01, gt=0, le=1, description="Adam's learning rate.")
    weight_decay: float = Field(5e-4, ge=0, le=1, description="Adam's weight decay (L2 penalty).")
    batching: Batching = Field(
        "full",
        description=(
            "full: the whole graph at every step; sampled: neighbour-sampled batches "
            "of target nodes."
        ),
    )
    batch_size: int = Field(
        1024,
        ge=1,
        le=10_000_000,
        description="Target nodes per step of sampled batching.",
    )
    fanout: Fanout | None = Field(
        None,
        min_length=1,
        description=(
            "Sampled batching: neighbours drawn per layer, first layer first, one "
            "entry per layer; or all."
        ),
    )
    compile: CompileMode = Field(
        "auto",
        description=(
            "auto: torch.compile a full-batch run when its graph is large enough for "
            "the compile to pay back; true: always; false: never."
        ),
    )
    kernel: Kernel = Field(
        "auto",
        description=(
            "How attention layers compute. auto: the sparse kernel when a step's edges are "
            "many enough for it to pay; sparse: always (attention kinds only); scatter: "
            "PyG's layers."
        ),
    )

    _compile_mode = field_validator("compile", mode="before")(compile_mode)

    @property
    def sampled(self) -> bool:
        return self.batching == "sampled"


class TrainingOverride(StrictModel):
    """Per-contender changes to the suite's training defaults; unset keys keep the default."""

    epochs: int | None = Field(
        None,
        ge=1,
        le=100_000,
        description="Most epochs a run trains; default: the suite's.",
    )
    patience: int | None = Field(
        None,
        ge=1,
        le=100_000,
        description="Early-stopping patience in epochs; default: the suite's.",
    )
    learning_rate: float | None = Field(
        None,
        gt=0,
        le=1,
        description="Adam's learning rate; default: the suite's.",
    )
    weight_decay: float | None = Field(
        None,
        ge=0,
        le=1,
        description="Adam's weight decay; default: the suite's.",
    )
    batching: Batching | None = Field(None, description="full or sampled; default: the suite's.")
    batch_size: int | None = Field(
        None,
        ge=1,
        le=10_000_000,
        description="Target nodes per sampled step; default: the suite's.",
    )
    fanout: Fanout | None = Field(
        None,
        min_length=1,
        description="Neighbours drawn per layer, or all; default: the suite's.",
    )
    compile: CompileMode | None = Field(
        None,
        description="auto, true or false; default: the suite's.",
    )
    kernel: Kernel | None = Field(
        None, description="auto, sparse or scatter; default: the suite's."
    )

    _compile_mode = field_validator("compile", mode="before")(compile_mode)

    def apply(self, defaults: Training) -> Training:
        changes = {k: v for k, v in self.model_dump().items() if v is not None}
        return defaults.model_copy(update=changes)
