"""Exact inference in bounded memory: every layer over the whole graph, one chunk of nodes at
a time, each chunk with its full neighbourhood (no sampling).

Layer l's output at node i needs only layer l - 1's outputs at i and its in-neighbours, so
for a chunk C of target nodes the layer runs on the subgraph of C's in-edges (sources
relabelled) and keeps the rows of C. Memory per chunk grows with the chunk's edges, not the
graph; the layer outputs of all nodes (nodes x width) are the only whole-graph tensors.
Sampled and full-batch runs are scored the same way through this.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import torch
from torch import nn

from harness.models import unwrap

CHUNK_NODES = 16_384


@dataclass(frozen=True)
class Chunk:
    """Target nodes [start, stop), their in-edges relabelled to `local` node ids, the edges'
    position in the target-sorted edge list, and where the targets sit among `local`."""

    start: int
    stop: int
    local: torch.Tensor
    edge_index: torch.Tensor
    edge_slice: slice
    target_rows: torch.Tensor


class ChunkedGraph:
    """Message edges sorted by target, cut into chunks of consecutive target nodes."""

    def __init__(
        self,
        edges: torch.Tensor,
        weights: torch.Tensor | None,
        nodes: int,
        chunk_nodes: int = CHUNK_NODES,
    ):
        order = torch.argsort(edges[1], stable=True)
        self.edges = edges[:, order]
        self.weights = None if weights is None else weights[order]
        self.pointer = torch.zeros(nodes + 1, dtype=torch.long)
        self.pointer[1:] = torch.cumsum(torch.bincount(self.edges[1], minlength=nodes), 0)
        self.nodes = nodes
        self.chunk_nodes = chunk_nodes

    def chunks(self) -> Iterator[Chunk]:
        for start in range(0, self.nodes, self.chunk_nodes):
            stop = min(start + self.chunk_nodes, self.nodes)
            span = slice(int(self.pointer[start]), int(self.pointer[stop]))
            part = self.edges[:, span]
            targets = torch.arange(start, stop)
            local = torch.unique(torch.cat([targets, part[0]]))
            relabelled = torch.searchsorted(local, part.contiguous())
            yield Chunk(start, stop, local, relabelled, span, torch.searchsorted(local, targets))

    def chunk_weights(self, chunk: Chunk) -> torch.Tensor | None:
        return None if self.weights is None else self.weights[chunk.edge_slice]


@torch.no_grad()
def chunked_logits(
    model: nn.Module,
    x: torch.Tensor,
    edge_index: torch.Tensor,
    chunk_nodes: int = CHUNK_NODES,
    edge_attr: torch.Tensor | None = None,
) -> torch.Tensor:
    """The model's logits for every node (evaluation mode), computed layer by layer in chunks;
    equal to `model(x, edge_index, edge_attr=edge_attr)` up to the order of floating-point
    sums (edge attributes travel with their edges like edge weights)."""
    model.eval()
    stack, h = unwrap(model, x)
    if stack.whole_graph:  # every node reads every node: chunks would change the result
        return model(x, edge_index, **({} if edge_attr is None else {"edge_attr": edge_attr}))
    nodes = h.size(0)
    if not stack.uses_edges:  # MLP: rows are independent
        edge_index = edge_index[:, :0]
    edges, weights = stack.edges_of(edge_index, nodes, edge_attr)
    graph = ChunkedGraph(edges, weights, nodes, chunk_nodes)
    for index in range(len(stack.layers)):
        parts = [
            stack.layer_step(index, h[c.local], c.edge_index, graph.chunk_weights(c))[c.target_rows]
            for c in graph.chunks()
        ]
        h = torch.cat(parts)
    return stack.finish(h)
