"""The layer stack every contender shares: dropout -> layer -> activation, no activation last."""

from __future__ import annotations

import torch
from torch import nn

ACTIVATIONS = {
    "relu": nn.ReLU,
    "elu": nn.ELU,
    "gelu": nn.GELU,
    "leaky_relu": nn.LeakyReLU,
    "tanh": nn.Tanh,
}


class LayerStack(nn.Module):
    """h^{l+1} = act(layer_l(dropout(h^l), edges)); the last layer's output are class logits."""

    def __init__(self, layers: list[nn.Module], activation: str, dropout: float, uses_edges: bool):
        super().__init__()
        self.layers = nn.ModuleList(layers)
        self.activation = ACTIVATIONS[activation]()
        self.dropout = nn.Dropout(dropout)
        self.uses_edges = uses_edges

    def reset_parameters(self) -> None:
        for layer in self.layers:
            layer.reset_parameters()

    def forward(self, x: torch.Tensor, edge_index: torch.Tensor) -> torch.Tensor:
        for index, layer in enumerate(self.layers):
            x = self.dropout(x)
            x = layer(x, edge_index) if self.uses_edges else layer(x)
            if index < len(self.layers) - 1:
                x = self.activation(x)
        return x


def widths(in_dim: int, hidden: int, out_dim: int, layers: int) -> list[tuple[int, int]]:
    """(input, output) width of each layer of a plain stack."""
    dims = [in_dim] + [hidden] * (layers - 1) + [out_dim]
    return list(zip(dims[:-1], dims[1:], strict=True))
