"""Two ways of feeding the one training loop: the whole graph at every step, or
neighbour-sampled batches of target nodes (harness.training.sampling)."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import torch
from torch import nn
from torch_geometric.data import Data

from harness.models import unwrap
from harness.planning.run_choices import sampler_in_use
from harness.schema.training import Training
from harness.training.edge_inputs import read_attributes
from harness.training.sampling import batch_loader, fanout_counts


@dataclass(frozen=True)
class Step:
    """One optimiser step's input: the loss is taken at output `rows` against `labels`."""

    x: torch.Tensor
    edge_index: torch.Tensor
    edge_weight: torch.Tensor | None
    rows: torch.Tensor
    labels: torch.Tensor
    edge_attr: torch.Tensor | None = None  # for models that read edge attributes

    def tensors(self) -> tuple[torch.Tensor, ...]:
        extra = tuple(t for t in (self.edge_weight, self.edge_attr) if t is not None)
        return (self.x, self.edge_index, self.labels, *extra)


class FullFeed:
    """Every step sees the whole training graph; the loss is taken at the training rows."""

    def __init__(
        self, graph: Data, rows: torch.Tensor, labels: torch.Tensor, attributes: torch.Tensor | None
    ):
        self.step = Step(graph.x, graph.edge_index, None, rows, labels, attributes)

    def steps(self) -> Iterator[Step]:
        yield self.step

    def extras(self) -> dict:
        return {}


class SampledFeed:
    """Shuffled batches of the training rows with their sampled neighbourhoods.

    A model that ignores edges (MLP) gets plain node batches: no neighbours are drawn.
    Graph convolution gets the weights of its full graph's degrees (models.convolution).
    """

    def __init__(
        self, model: nn.Module, graph: Data, rows: torch.Tensor, training: Training, seed: int
    ):
        self.stack, _ = unwrap(model, graph.x[:0])
        layers = len(self.stack.layers)
        hops = fanout_counts(training.fanout, layers) if self.stack.uses_edges else []
        self.reads_attributes = read_attributes(model, graph) is not None
        self.loader = batch_loader(graph, rows, hops, training.batch_size, seed)
        self.degree = torch.bincount(graph.edge_index[1], minlength=graph.num_nodes)
        self.nodes: list[int] = []
        self.edges: list[int] = []

    def steps(self) -> Iterator[Step]:
        for batch in self.loader:
            edges, weights = self.stack.batch_edges(batch.edge_index, self.degree[batch.n_id])
            self.nodes.append(batch.num_nodes)
            self.edges.append(batch.edge_index.size(1))
            targets = torch.arange(batch.batch_size)
            attributes = batch.edge_attr if self.reads_attributes else None
            yield Step(batch.x, edges, weights, targets, batch.y[: batch.batch_size], attributes)

    def extras(self) -> dict:
        """The sampler used and the mean batch size in nodes and edges over all steps."""
        steps = max(len(self.nodes), 1)
        return {
            "sampler": sampler_in_use(),
            "sampled_nodes_per_step": sum(self.nodes) / steps,
            "sampled_edges_per_step": sum(self.edges) / steps,
            "steps_per_epoch": len(self.loader),
        }


def make_feed(
    model: nn.Module,
    graph: Data,
    rows: torch.Tensor,
    labels: torch.Tensor,
    training: Training,
    seed: int,
) -> FullFeed | SampledFeed:
    if training.sampled:
        return SampledFeed(model, graph, rows, training, seed)
    return FullFeed(graph, rows, labels, read_attributes(model, graph))
