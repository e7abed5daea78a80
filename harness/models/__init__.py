"""Model stage: a registry from model kind to builder `build(options, in_dim, out_dim)`."""

from __future__ import annotations

from collections.abc import Callable

from pydantic import BaseModel
from torch import nn

from harness.models import attention, convolution, neighbour_mean, perceptron

BUILDERS: dict[str, Callable[[BaseModel, int, int], nn.Module]] = {
    "gat": attention.build,
    "gatv2": attention.build,
    "gcn": convolution.build,
    "sage": neighbour_mean.build,
    "mlp": perceptron.build,
}


def build_model(options: BaseModel, in_dim: int, out_dim: int) -> nn.Module:
    """The contender's network, freshly initialised from the current torch seed."""
    return BUILDERS[options.model](options, in_dim, out_dim)
