"""Graph attention contenders on PyG's GATConv, GATv2Conv and TransformerConv.

Static attention (Velickovic et al., 2018), model "gat":
    e_ij = LeakyReLU(a^T [W h_i || W h_j]),  alpha_ij = softmax_{j in N(i)}(e_ij)
Dynamic attention (Brody et al., 2022), model "gatv2":
    e_ij = a^T LeakyReLU(W_s h_j + W_t h_i)
Scaled dot-product attention (Shi et al., 2021), model "dot_product":
    e_ij = (W_q h_i)^T (W_k h_j) / sqrt(d),  messages W_v h_j
The graph transformer layer (Shi et al., 2021, eq. 3-5 and 7), model "transformer": the same
scores and messages m_i = sum_j alpha_ij W_v h_j, then a gated skip from the node itself:
    beta_i = sigmoid(w_b^T [m_i || W_r h_i || m_i - W_r h_i])
    h_i' = beta_i W_r h_i + (1 - beta_i) m_i
Each head k computes h_i^k = sum_j alpha_ij^k W^k h_j. A layer merges its K heads by
concatenation (||_k h_i^k) or by the mean (1/K sum_k h_i^k); defaults as Velickovic et al.:
concatenate in hidden layers, average in the output layer. An output layer that concatenates
is followed by a linear map from K x classes to classes.
N(i) is the attention edge set: the k-hop neighbourhood (harness.data.hops) plus i itself
when `attend_to_self`. `residual` adds a linear skip W_r h_i to each layer's output.
With `edge_features`, each layer also reads the edge attributes e_ij (PyG's `edge_dim`):
static scores add a^T W_e e_ij, dynamic ones add W_e e_ij inside the LeakyReLU, dot-product
scores and messages add W_e e_ij to the keys and values; self-loops get the mean of a node's
incoming attributes (PyG's fill_value="mean").
With `kernel = "sparse"` the same layers (and parameters) are computed by the sparse kernel
(harness.models.sparse_layers) on the edges in target order, derived once per edge set.
"""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.nn import GATConv, GATv2Conv, MessagePassing, TransformerConv
from torch_geometric.utils import add_self_loops, remove_self_loops

from harness.models.graph_cache import once_per_graph
from harness.models.sparse_kernel import TargetGraphs
from harness.models.sparse_layers import sparse_forward
from harness.models.stack import LayerStack
from harness.schema.contenders import AttentionOptions
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.named import imported


class ScaledDotProductConv(TransformerConv):
    """PyG's TransformerConv; with the skip term off its unused skip weights are dropped, so
    parameter counts hold only what the layer computes with."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        if not self.root_weight:
            self.lin_skip = None

    def reset_parameters(self) -> None:
        MessagePassing.reset_parameters(self)
        parts = (self.lin_key, self.lin_query, self.lin_value, self.lin_edge, self.lin_skip)
        for part in (*parts, self.lin_beta):
            if part is not None:
                part.reset_parameters()


def dot_product_layer(
    options: AttentionOptions, width: int, out: int, heads: int, concat: bool, edge_width: int = 0
) -> nn.Module:
    """Scaled dot-product scores (Shi et al., 2021); `residual` is TransformerConv's root weight."""
    return ScaledDotProductConv(
        width,
        out,
        root_weight=options.residual,
        **shared_settings(options, heads, concat, edge_width),
    )


def transformer_layer(
    options: AttentionOptions, width: int, out: int, heads: int, concat: bool, edge_width: int = 0
) -> nn.Module:
    """The graph transformer layer (Shi et al., 2021): dot-product attention and the gated
    skip (the module docstring's beta_i)."""
    return ScaledDotProductConv(
        width,
        out,
        root_weight=True,
        beta=True,
        **shared_settings(options, heads, concat, edge_width),
    )


def static_layer(
    options: AttentionOptions, width: int, out: int, heads: int, concat: bool, edge_width: int = 0
) -> nn.Module:
    """Static scores (Velickovic et al., 2018)."""
    return scored_layer(GATConv, options, width, out, heads, concat, edge_width)


def dynamic_layer(
    options: AttentionOptions, width: int, out: int, heads: int, concat: bool, edge_width: int = 0
) -> nn.Module:
    """Dynamic scores (Brody et al., 2022)."""
    return scored_layer(GATv2Conv, options, width, out, heads, concat, edge_width)


def shared_settings(options: AttentionOptions, heads: int, concat: bool, edge_width: int) -> dict:
    return {
        "heads": heads,
        "concat": concat,
        "dropout": options.attention_dropout,
        "edge_dim": edge_width or None,
    }


def scored_layer(
    layer_class: type[MessagePassing],
    options: AttentionOptions,
    width: int,
    out: int,
    heads: int,
    concat: bool,
    edge_width: int,
) -> nn.Module:
    """A LeakyReLU-scored layer; self-loops are handled by the stack, not by the layer."""
    return layer_class(
        width,
        out,
        negative_slope=options.negative_slope,
        add_self_loops=False,
        residual=options.residual,
        **shared_settings(options, heads, concat, edge_width),
    )


def attention_layer(
    options: AttentionOptions, width: int, out: int, heads: int, concat: bool, edge_width: int
) -> nn.Module:
    """One layer of the kind's declared layer function (harness/schema/model_kinds.py)."""
    layer = imported(MODEL_KINDS[options.model].layer)
    return layer(options, width, out, heads, concat, edge_width)


class AttentionStack(LayerStack):
    """h^{l+1} = act(attention_l(dropout(h^l), N)); the last output (projected) are logits."""

    def __init__(
        self,
        layers: list[nn.Module],
        activation: str,
        dropout: float,
        attend_to_self: bool,
        projection: nn.Module | None = None,
    ):
        super().__init__(layers, activation, dropout, uses_edges=True)
        self.attend_to_self = attend_to_self
        self.projection = projection
        self.kernel = "scatter"  # "sparse": layers run on harness.models.sparse_layers
        self.target_graphs = TargetGraphs()

    def reset_parameters(self) -> None:
        super().reset_parameters()
        if self.projection is not None:
            self.projection.reset_parameters()

    def attention_edges(self, edge_index: torch.Tensor, nodes: int) -> torch.Tensor:
        """The edges attention runs on: the given ones, with exactly one self-loop if asked."""
        edge_index, _ = remove_self_loops(edge_index)
        if self.attend_to_self:
            edge_index, _ = add_self_loops(edge_index, num_nodes=nodes)
        return edge_index

    def message_edges(self, edge_index: torch.Tensor, nodes: int) -> tuple[torch.Tensor, None]:
        return self.attention_edges(edge_index, nodes), None

    def attributed_edges(
        self, edge_index: torch.Tensor, nodes: int, edge_attr: torch.Tensor
    ) -> tuple[torch.Tensor, torch.Tensor]:
        """The attention edges with their attributes; a self-loop gets the mean of its node's
        incoming attributes (PyG's fill_value="mean")."""
        edge_index, edge_attr = remove_self_loops(edge_index, edge_attr)
        if self.attend_to_self:
            edge_index, edge_attr = add_self_loops(
                edge_index, edge_attr, fill_value="mean", num_nodes=nodes
            )
        return edge_index, edge_attr

    def apply_layer(
        self,
        layer: nn.Module,
        x: torch.Tensor,
        edges: torch.Tensor,
        weights: torch.Tensor | None = None,
    ) -> torch.Tensor:
        """`weights` here are edge attributes (the sparse kernel is never chosen with them)."""
        if weights is not None:
            return layer(x, edges, weights)
        if self.kernel == "scatter":
            return layer(x, edges)
        return sparse_forward(layer, x, self.target_graphs.get(edges, x.size(0)))

    def attention_step(
        self,
        index: int,
        x: torch.Tensor,
        edges: torch.Tensor,
        attributes: torch.Tensor | None = None,
    ) -> tuple[torch.Tensor, torch.Tensor]:
        """Layer `index` like `layer_step`, also returning its weights [edges, heads]."""
        extra = () if attributes is None else (attributes,)
        layer = self.layers[index]
        x, (_, alpha) = layer(self.dropout(x), edges, *extra, return_attention_weights=True)
        return (self.activation(x) if index < len(self.layers) - 1 else x), alpha

    def finish(self, x: torch.Tensor) -> torch.Tensor:
        return x if self.projection is None else self.projection(x)

    def run(
        self,
        x: torch.Tensor,
        edge_index: torch.Tensor,
        keep_attention: bool = False,
        edge_attr: torch.Tensor | None = None,
    ) -> tuple[torch.Tensor, torch.Tensor, list[torch.Tensor]]:
        """Logits, the attention edge set and (if kept) each layer's weights [edges, heads]."""
        edges, attributes = once_per_graph(
            self.edge_cache, edge_index, x.size(0), self.edges_of, edge_attr
        )
        weights: list[torch.Tensor] = []
        for index in range(len(self.layers)):
            if keep_attention:
                x, alpha = self.attention_step(index, x, edges, attributes)
                weights.append(alpha)
            else:
                x = self.layer_step(index, x, edges, attributes)
        return self.finish(x), edges, weights


def build(
    options: AttentionOptions,
    in_dim: int,
    out_dim: int,
    kernel: str = "scatter",
    edge_width: int = 0,
) -> nn.Module:
    heads, merges = options.heads_per_layer(), options.merge_per_layer()
    layers: list[nn.Module] = []
    width = in_dim
    for index in range(options.layers):
        last = index == options.layers - 1
        out = out_dim if last else options.hidden
        concat = merges[index] == "concatenate"
        layers.append(attention_layer(options, width, out, heads[index], concat, edge_width))
        width = out * heads[index] if concat else out
    projection = nn.Linear(width, out_dim) if width != out_dim else None
    stack = AttentionStack(
        layers, options.activation, options.dropout, options.attend_to_self, projection
    )
    stack.kernel = kernel
    stack.edge_width = edge_width
    return stack
