"""Options of each model kind. Adding a kind: one options class here, one module in models/."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from harness.schema.base import StrictModel
from harness.schema.training import TrainingOverride

Activation = Literal["relu", "elu", "gelu", "leaky_relu", "tanh"]


class ContenderBase(StrictModel):
    """Options every contender has."""

    layers: int = Field(2, ge=1, le=8)
    hidden: int = Field(64, ge=1, le=4096)
    dropout: float = Field(0.5, ge=0, lt=1)
    activation: Activation = "elu"
    training: TrainingOverride = TrainingOverride()


class AttentionOptions(ContenderBase):
    """Graph attention: `hidden` is the width of each head."""

    model: Literal["gat", "gatv2"]
    hidden: int = Field(8, ge=1, le=4096)
    heads: int = Field(8, ge=1, le=16)
    attention_dropout: float = Field(0.0, ge=0, lt=1)


class ConvolutionOptions(ContenderBase):
    """Graph convolution with symmetric normalisation (Kipf and Welling, 2017)."""

    model: Literal["gcn"]


class NeighbourMeanOptions(ContenderBase):
    """Mean aggregation over neighbours plus a root weight (Hamilton et al., 2017)."""

    model: Literal["sage"]


class MLPOptions(ContenderBase):
    """Multi-layer perceptron on node features alone: ignores edges."""

    model: Literal["mlp"]


ContenderOptions = Annotated[
    AttentionOptions | ConvolutionOptions | NeighbourMeanOptions | MLPOptions,
    Field(discriminator="model"),
]

ATTENTION_KINDS = ("gat", "gatv2")
MODEL_KINDS = ("gat", "gatv2", "gcn", "sage", "mlp")
