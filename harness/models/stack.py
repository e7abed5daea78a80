"""The layer stack every contender shares: dropout -> layer -> activation, no activation last."""

from __future__ import annotations

from collections.abc import Callable

import torch
from torch import nn

from harness.models.graph_cache import EdgeCache, graph_inputs_of, into_rows

ACTIVATIONS = {
    "relu": nn.ReLU,
    "elu": nn.ELU,
    "gelu": nn.GELU,
    "leaky_relu": nn.LeakyReLU,
    "tanh": nn.Tanh,
}


# what a stack hands its layers after the features: () for no edges, (edge_index,), or tensors
# derived from the edges once per graph, such as graph convolution's normalised weights
GraphInputs = Callable[[torch.Tensor, int, torch.dtype], tuple[torch.Tensor, ...]]


def no_edges(edge_index: torch.Tensor, nodes: int, dtype: torch.dtype) -> tuple:
    return ()


def given_edges(edge_index: torch.Tensor, nodes: int, dtype: torch.dtype) -> tuple:
    return (edge_index,)


class LayerStack(nn.Module):
    """h^{l+1} = act(layer_l(dropout(h^l), edges)); the last layer's output are class logits.

    `graph_inputs(edge_index, nodes, dtype)` gives what each layer takes after the features;
    it runs once per graph (harness.models.graph_cache), not once per forward pass. With
    `rows`, the output is the logits of those rows only, the last layer computed for them alone.
    """

    def __init__(
        self, layers: list[nn.Module], activation: str, dropout: float, graph_inputs: GraphInputs
    ):
        super().__init__()
        self.layers = nn.ModuleList(layers)
        self.activation = ACTIVATIONS[activation]()
        self.dropout = nn.Dropout(dropout)
        self.graph_inputs = graph_inputs
        self.edge_cache = EdgeCache()
        self.row_cache = EdgeCache()

    def reset_parameters(self) -> None:
        for layer in self.layers:
            layer.reset_parameters()

    def forward(
        self, x: torch.Tensor, edge_index: torch.Tensor, rows: torch.Tensor | None = None
    ) -> torch.Tensor:
        nodes = x.size(0)
        graph = graph_inputs_of(self.edge_cache, edge_index, nodes, x.dtype, self.graph_inputs)
        last = len(self.layers) - 1
        for index, layer in enumerate(self.layers):
            x = self.dropout(x)
            if index == last and rows is not None:
                return layer(x, *into_rows(self.row_cache, graph, rows, nodes))[rows]
            x = layer(x, *graph)
            if index < last:
                x = self.activation(x)
        return x


def widths(in_dim: int, hidden: int, out_dim: int, layers: int) -> list[tuple[int, int]]:
    """(input, output) width of each layer of a plain stack."""
    dims = [in_dim] + [hidden] * (layers - 1) + [out_dim]
    return list(zip(dims[:-1], dims[1:], strict=True))
