"""Model stage: a registry from model kind to builder `build(options, in_dim, out_dim)`."""

from __future__ import annotations

from collections.abc import Callable

import torch
from pydantic import BaseModel
from torch import nn

from harness.models import attention, convolution, neighbour_mean, perceptron

BUILDERS: dict[str, Callable[[BaseModel, int, int], nn.Module]] = {
    "gat": attention.build,
    "gatv2": attention.build,
    "dot_product": attention.build,
    "gcn": convolution.build,
    "sage": neighbour_mean.build,
    "mlp": perceptron.build,
}


class EmbeddingStart(nn.Module):
    """Identity feature start: x holds node ids; each id looks up one learned row."""

    def __init__(self, rows: int, width: int, inner: nn.Module):
        super().__init__()
        self.embedding = nn.Embedding(rows, width)
        self.inner = inner

    def forward(
        self,
        x: torch.Tensor,
        edge_index: torch.Tensor,
        edge_weight: torch.Tensor | None = None,
        rows: torch.Tensor | None = None,
    ) -> torch.Tensor:
        return self.inner(self.embedding(x), edge_index, edge_weight, rows)


def unwrap(model: nn.Module, x: torch.Tensor) -> tuple[nn.Module, torch.Tensor]:
    """The layer stack and its input features (node ids looked up when the start embeds)."""
    if isinstance(model, EmbeddingStart):
        return model.inner, model.embedding(x)
    return model, x


def build_model(
    options: BaseModel, in_dim: int, out_dim: int, embedding_rows: int = 0
) -> nn.Module:
    """The contender's network, freshly initialised from the current torch seed.

    With `embedding_rows` > 0 the input is node ids, embedded in `in_dim` columns first.
    """
    network = BUILDERS[options.model](options, in_dim, out_dim)
    return EmbeddingStart(embedding_rows, in_dim, network) if embedding_rows else network
