"""Model stage: builds the network of a contender through its kind's registered builder
(harness/schema/model_kinds.py)."""

from __future__ import annotations

import torch
from pydantic import BaseModel
from torch import nn

from harness.models.interface import Network
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.named import imported


def load_builders() -> None:
    """Import every registered builder now (worker processes do, before their first run)."""
    for kind in MODEL_KINDS.values():
        imported(kind.builder)


def builder_of(model: str):  # noqa: ANN201 - build(options, in_dim, out_dim) -> nn.Module
    """The registered kind's builder, imported on first use."""
    return imported(MODEL_KINDS[model].builder)


class EmbeddingStart(nn.Module):
    """Identity feature start: x holds node ids; each id looks up one learned row."""

    def __init__(self, rows: int, width: int, inner: nn.Module):
        super().__init__()
        self.embedding = nn.Embedding(rows, width)
        self.inner = inner

    def forward(
        self, x: torch.Tensor, *graph: torch.Tensor | None, **named: torch.Tensor | None
    ) -> torch.Tensor:
        """The inner network's forward, on the embedded ids and the rest as given."""
        return self.inner(self.embedding(x), *graph, **named)


def unwrap(model: nn.Module, x: torch.Tensor) -> tuple[Network, torch.Tensor]:
    """The layer stack and its input features (node ids looked up when the start embeds)."""
    if isinstance(model, EmbeddingStart):
        return model.inner, model.embedding(x)
    return model, x


def build_model(
    options: BaseModel,
    in_dim: int,
    out_dim: int,
    embedding_rows: int = 0,
    kernel: str = "scatter",
    edge_width: int = 0,
) -> nn.Module:
    """The contender's network, freshly initialised from the current torch seed.

    With `embedding_rows` > 0 the input is node ids, embedded in `in_dim` columns first.
    `kernel` "sparse" (resolved by harness.planning, only for kinds registered with
    `sparse_kernel`) goes to the builder; the parameters and their initialisation are the same.
    `edge_width`: width of the edge attributes, for options that read them.
    """
    build = builder_of(options.model)
    extra: dict = {"kernel": kernel} if kernel != "scatter" else {}
    if options.edge_attribute_use() != "none":
        extra["edge_width"] = edge_width
    network = build(options, in_dim, out_dim, **extra)
    return EmbeddingStart(embedding_rows, in_dim, network) if embedding_rows else network
