"""Graph-level models: a contender's node layers, a readout that pools each graph's node
states, and a linear classifier.

logits_g = W dropout(readout({act(h_v) : v in g})) + b, with h the encoder's last node states.
Readouts: mean, sum and max (PyG's global pools), and gated attention pooling (Li et al., 2016,
"Gated graph sequence neural networks", eq. 7; PyG's AttentionalAggregation):
r_g = sum_v softmax_v(w . h_v + c) h_v over the nodes v of g.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import (
    AttentionalAggregation,
    global_add_pool,
    global_max_pool,
    global_mean_pool,
)

from harness.models import build_model
from harness.schema.contenders import ContenderBase


class PlainPool(nn.Module):
    """A parameter-free readout (PyG's global pools)."""

    def __init__(self, pool) -> None:  # noqa: ANN001 - pool(x, batch, size) -> Tensor
        super().__init__()
        self.pool = pool

    def forward(self, x: torch.Tensor, batch: torch.Tensor, graphs: int) -> torch.Tensor:
        return self.pool(x, batch, graphs)


class GatedAttentionPool(nn.Module):
    """Li et al. (2016): a learned score per node, softmax within each graph, weighted sum."""

    def __init__(self, width: int) -> None:
        super().__init__()
        self.aggregate = AttentionalAggregation(gate_nn=nn.Linear(width, 1))

    def forward(self, x: torch.Tensor, batch: torch.Tensor, graphs: int) -> torch.Tensor:
        return self.aggregate(x, index=batch, dim_size=graphs)


READOUTS = {
    "mean": lambda width: PlainPool(global_mean_pool),
    "sum": lambda width: PlainPool(global_add_pool),
    "max": lambda width: PlainPool(global_max_pool),
    "attention": GatedAttentionPool,
}


class GraphClassifier(nn.Module):
    """Called as `model(x, edge_index, batch, graphs)`: class logits [graphs, classes]."""

    def __init__(self, encoder: nn.Module, readout: str, width: int, classes: int) -> None:
        super().__init__()
        self.encoder = encoder
        self.readout = READOUTS[readout](width)
        self.classifier = nn.Linear(width, classes)

    def forward(
        self,
        x: torch.Tensor,
        edge_index: torch.Tensor,
        batch: torch.Tensor,
        graphs: int,
        edge_attr: torch.Tensor | None = None,
    ) -> torch.Tensor:
        """Logits of the `graphs` graphs of a batch (`batch`: each node's graph); `edge_attr`
        only for encoders that read edge attributes."""
        named = {} if edge_attr is None else {"edge_attr": edge_attr}
        states = self.encoder.activation(self.encoder(x, edge_index, **named))
        pooled = self.readout(states, batch, graphs)
        return self.classifier(self.encoder.dropout(pooled))


def build_graph_model(
    options: ContenderBase, in_dim: int, classes: int, edge_width: int = 0
) -> GraphClassifier:
    """The contender's node layers (their last layer `hidden` wide) under a readout and a
    linear classifier, freshly initialised from the current torch seed; `edge_width`: width of
    the edge attributes, for encoders that read them."""
    encoder = build_model(options, in_dim, options.hidden, edge_width=edge_width)
    return GraphClassifier(encoder, options.readout, options.hidden, classes)
