"""The model-kind registry: every kind's options class, builder, and what the rest needs to know.

Adding a kind is one module in harness/models/ (its builder) and one line here. The builder is
named by its import path, so that validating a suite imports no torch; the models stage imports
it when a model is first built.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Annotated, Union

from pydantic import Field

from harness.schema.contenders import (
    AttentionOptions,
    ContenderBase,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)


@dataclass(frozen=True)
class ModelKind:
    """One model kind. `extra_hops`: hops beyond its layers' (times the hop radius) that a
    node's output depends on, e.g. through degree normalisation."""

    options: type[ContenderBase]  # pydantic class with `model: Literal[<kind name>, ...]`
    builder: str  # "module:function", build(options, in_dim, out_dim) -> torch module
    attends: bool = False  # has attention weights (the diagnostics read them)
    extra_hops: int = 0


MODEL_KINDS: dict[str, ModelKind] = {
    "gat": ModelKind(AttentionOptions, "harness.models.attention:build", attends=True),
    "gatv2": ModelKind(AttentionOptions, "harness.models.attention:build", attends=True),
    "dot_product": ModelKind(AttentionOptions, "harness.models.attention:build", attends=True),
    # D^{-1/2} (A + I) D^{-1/2}: a neighbour's degree counts its own neighbours, one hop on
    "gcn": ModelKind(ConvolutionOptions, "harness.models.convolution:build", extra_hops=1),
    "sage": ModelKind(NeighbourMeanOptions, "harness.models.neighbour_mean:build"),
    "mlp": ModelKind(MLPOptions, "harness.models.perceptron:build"),
}


def attends(model: str) -> bool:
    """Whether a model kind has attention weights (False for kinds no longer registered)."""
    kind = MODEL_KINDS.get(model)
    return kind is not None and kind.attends


def attention_kinds() -> tuple[str, ...]:
    return tuple(name for name, kind in MODEL_KINDS.items() if kind.attends)


def options_union() -> object:
    """The contender options of every registered kind, told apart by their `model` field."""
    classes = tuple(dict.fromkeys(kind.options for kind in MODEL_KINDS.values()))
    return Annotated[Union[classes], Field(discriminator="model")]  # noqa: UP007


ContenderOptions = options_union()
