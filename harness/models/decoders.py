"""Link prediction: a contender's network as encoder of node embeddings, and a pair decoder.

dot_product  s_ij = h_i . h_j
mlp          s_ij = w_2^T ReLU(W_1 (h_i * h_j) + b_1) + b_2, the element-wise product keeping the
             score symmetric in i and j (common practice for undirected link prediction)
Scores are logits: sigma(s_ij) is the predicted probability that (i, j) is an edge.
"""

from __future__ import annotations

from collections.abc import Callable

import torch
from pydantic import BaseModel
from torch import nn

from harness.models import build_model


class DotProductDecoder(nn.Module):
    """s_ij = h_i . h_j."""

    def reset_parameters(self) -> None:
        pass  # no weights

    def forward(self, embeddings: torch.Tensor, pairs: torch.Tensor) -> torch.Tensor:
        return (embeddings[pairs[0]] * embeddings[pairs[1]]).sum(dim=-1)


class PairPerceptronDecoder(nn.Module):
    """s_ij = MLP(h_i * h_j) with one hidden ReLU layer."""

    def __init__(self, width: int, hidden: int):
        super().__init__()
        self.hidden = nn.Linear(width, hidden)
        self.out = nn.Linear(hidden, 1)

    def reset_parameters(self) -> None:
        self.hidden.reset_parameters()
        self.out.reset_parameters()

    def forward(self, embeddings: torch.Tensor, pairs: torch.Tensor) -> torch.Tensor:
        product = embeddings[pairs[0]] * embeddings[pairs[1]]
        return self.out(torch.relu(self.hidden(product))).squeeze(-1)


# the `[link]` decoder choices, each built from the link options
DECODERS: dict[str, Callable[[BaseModel], nn.Module]] = {
    "dot_product": lambda link: DotProductDecoder(),
    "mlp": lambda link: PairPerceptronDecoder(link.embedding_width, link.decoder_hidden),
}


class LinkModel(nn.Module):
    """Encoder (any contender kind) followed by a pair decoder."""

    def __init__(self, encoder: nn.Module, decoder: nn.Module):
        super().__init__()
        self.encoder = encoder
        self.decoder = decoder

    def encode(self, x: torch.Tensor, edge_index: torch.Tensor) -> torch.Tensor:
        return self.encoder(x, edge_index)

    def forward(
        self, x: torch.Tensor, edge_index: torch.Tensor, pairs: torch.Tensor
    ) -> torch.Tensor:
        return self.decoder(self.encode(x, edge_index), pairs)


def build_link_model(
    options: BaseModel,
    link: BaseModel,
    in_dim: int,
    embedding_rows: int = 0,
    kernel: str = "scatter",
) -> LinkModel:
    """The contender's network with `link.embedding_width` outputs, and the suite's decoder."""
    encoder = build_model(options, in_dim, link.embedding_width, embedding_rows, kernel)
    return LinkModel(encoder, DECODERS[link.decoder](link))
