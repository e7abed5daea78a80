"""The layer stack every contender shares: dropout -> layer -> activation, no activation last."""

from __future__ import annotations

import torch
from torch import nn

from harness.models.graph_cache import EdgeCache, into_rows, once_per_graph

ACTIVATIONS = {
    "relu": nn.ReLU,
    "elu": nn.ELU,
    "gelu": nn.GELU,
    "leaky_relu": nn.LeakyReLU,
    "tanh": nn.Tanh,
}


class LayerStack(nn.Module):
    """h^{l+1} = act(layer_l(dropout(h^l), edges)); the last layer's output are class logits.

    The shared implementation of harness.models.interface.Network; a kind changes how its
    message edges are derived (`message_edges`, `batch_edges`) or its logits (`finish`).

    The forward pass is also open layer by layer (`message_edges`, `layer_step`, `finish`), so
    that inference can run each layer over chunks of target nodes (harness.training.inference).
    The message edges are derived once per graph (harness.models.graph_cache). With `rows`, the
    output is the logits of those rows only, the last layer computed for them alone.
    A stack with `edge_width` > 0 reads edge attributes of that width: its message edges carry
    them in the per-edge slot, and its layers take them as their third argument.
    """

    def __init__(self, layers: list[nn.Module], activation: str, dropout: float, uses_edges: bool):
        super().__init__()
        self.layers = nn.ModuleList(layers)
        self.activation = ACTIVATIONS[activation]()
        self.dropout = nn.Dropout(dropout)
        self.uses_edges = uses_edges
        self.edge_cache = EdgeCache()
        self.row_cache = EdgeCache()
        self.edge_width = 0
        self.whole_graph = False  # layers that read every node (inference never chunks them)

    def reset_parameters(self) -> None:
        for layer in self.layers:
            layer.reset_parameters()

    def message_edges(
        self, edge_index: torch.Tensor, nodes: int
    ) -> tuple[torch.Tensor, torch.Tensor | None]:
        """The edges (and edge weights, if any) every layer passes messages along."""
        return edge_index, None

    def attributed_edges(
        self, edge_index: torch.Tensor, nodes: int, edge_attr: torch.Tensor
    ) -> tuple[torch.Tensor, torch.Tensor]:
        """Message edges with their attributes, for stacks that read them."""
        return edge_index, edge_attr

    def edges_of(
        self, edge_index: torch.Tensor, nodes: int, edge_attr: torch.Tensor | None = None
    ) -> tuple[torch.Tensor, torch.Tensor | None]:
        """Message edges and their per-edge tensor: attributes if the stack reads them, else
        weights (if any)."""
        if self.edge_width and edge_attr is not None:
            return self.attributed_edges(edge_index, nodes, edge_attr)
        return self.message_edges(edge_index, nodes)

    def batch_edges(
        self, edge_index: torch.Tensor, degree: torch.Tensor
    ) -> tuple[torch.Tensor, torch.Tensor | None]:
        """Message edges of a sampled batch, given each batch node's full-graph in-degree."""
        return edge_index, None

    def layer_step(
        self,
        index: int,
        x: torch.Tensor,
        edges: torch.Tensor,
        weights: torch.Tensor | None = None,
    ) -> torch.Tensor:
        """Layer `index` with its dropout before and activation after (none after the last)."""
        x = self.apply_layer(self.layers[index], self.dropout(x), edges, weights)
        return self.activation(x) if index < len(self.layers) - 1 else x

    def apply_layer(
        self, layer: nn.Module, x: torch.Tensor, edges: torch.Tensor, weights: torch.Tensor | None
    ) -> torch.Tensor:
        """One layer on its input and the message edges (a kind may compute it otherwise)."""
        if not self.uses_edges:
            return layer(x)
        return layer(x, edges) if weights is None else layer(x, edges, weights)

    def finish(self, x: torch.Tensor) -> torch.Tensor:
        """Logits from the last layer's output."""
        return x

    def forward(
        self,
        x: torch.Tensor,
        edge_index: torch.Tensor,
        edge_weight: torch.Tensor | None = None,
        rows: torch.Tensor | None = None,
        edge_attr: torch.Tensor | None = None,
    ) -> torch.Tensor:
        """Message edges once per graph (`edge_weight`, when given, goes with `edge_index` as
        the finished message edges), every layer, and with `rows` the last layer on the edges
        into those rows alone. `edge_attr`: the graph's edge attributes, one row per edge."""
        nodes = x.size(0)
        graph: tuple = (edge_index, edge_weight)
        if edge_weight is None:
            graph = once_per_graph(self.edge_cache, edge_index, nodes, self.edges_of, edge_attr)
        last = len(self.layers) - 1
        for index in range(last):
            x = self.layer_step(index, x, *graph)
        if rows is not None:
            graph = into_rows(self.row_cache, graph, rows, nodes)
        x = self.finish(self.layer_step(last, x, *graph))
        # the last layer and the projection run over every row, as in a full pass, bit for bit
        return x if rows is None else x[rows]


def widths(in_dim: int, hidden: int, out_dim: int, layers: int) -> list[tuple[int, int]]:
    """(input, output) width of each layer of a plain stack."""
    dims = [in_dim] + [hidden] * (layers - 1) + [out_dim]
    return list(zip(dims[:-1], dims[1:], strict=True))
