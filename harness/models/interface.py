"""What the training stage reads of a built network, declared once.

Every kind's builder returns a `Network` (most build on harness.models.stack.LayerStack):
inference and sampled batches run it layer by layer (harness.training.inference,
harness.training.feeding). A kind registered with `attends` builds an `AttentionNetwork`, whose
weights the diagnostics read (harness.training.diagnostics). Besides these members a network
is called as `network(x, edge_index, edge_weight=None, rows=None)` and gives the logits of
every node, or of `rows` only. tests/test_model_kinds.py checks every registered kind.
"""

from __future__ import annotations

from typing import Protocol, runtime_checkable

from torch import Tensor, nn

Edges = tuple[Tensor, Tensor | None]  # message edges and their weights, if any


@runtime_checkable
class Network(Protocol):
    """`layers` in order; `uses_edges` false when layers read node features alone;
    `edge_width` the width of the edge attributes its layers read (0: none)."""

    layers: nn.ModuleList
    uses_edges: bool
    edge_width: int

    def edges_of(self, edge_index: Tensor, nodes: int, edge_attr: Tensor | None) -> Edges:
        """Message edges with their attributes when it reads them, else `message_edges`."""

    def message_edges(self, edge_index: Tensor, nodes: int) -> Edges:
        """The edges (and weights) every layer passes messages along, from the graph's edges."""

    def batch_edges(self, edge_index: Tensor, degree: Tensor) -> Edges:
        """The same for a sampled batch, given each batch node's full-graph in-degree."""

    def layer_step(self, index: int, x: Tensor, edges: Tensor, weights: Tensor | None) -> Tensor:
        """Layer `index` on message edges, with what runs before and after it."""

    def finish(self, x: Tensor) -> Tensor:
        """Logits from the last layer's output."""


@runtime_checkable
class AttentionNetwork(Network, Protocol):
    """A network whose layers weigh each message edge, per head; `attend_to_self` says whether
    every node's message edges hold its self-loop."""

    attend_to_self: bool

    def attention_step(
        self, index: int, x: Tensor, edges: Tensor, attributes: Tensor | None
    ) -> tuple[Tensor, Tensor]:
        """`layer_step` (with edge attributes, not weights), also giving the weights
        [edges, heads]."""

    def run(
        self, x: Tensor, edge_index: Tensor, keep_attention: bool, edge_attr: Tensor | None
    ) -> tuple[Tensor, Tensor, list[Tensor]]:
        """Logits, the message edges, and (if kept) each layer's weights [edges, heads]."""
