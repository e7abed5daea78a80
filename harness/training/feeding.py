"""Feeds: what the one training loop (harness.training.loop) trains on, step by step.

A feed gives each epoch's steps, says whether its steps keep one shape (so a compiled model can
run them), and how to run the trained model over a whole graph for scoring. Two feeds here:
the whole graph at every step, or neighbour-sampled batches of target nodes
(harness.training.sampling). A feed of batches of small graphs is one more class with the same
members: its steps' inputs end with the batch vector, and its labels are one per graph.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any, Protocol

import torch
from torch import nn
from torch_geometric.data import Data

from harness.models import unwrap
from harness.planning.run_choices import sampler_in_use
from harness.schema.training import Training
from harness.training.diagnostics import attention_diagnostics, chunked_attention_diagnostics
from harness.training.edge_inputs import named_attributes, read_attributes
from harness.training.inference import chunked_logits
from harness.training.resources import tensor_bytes
from harness.training.sampling import batch_loader, fanout_counts

Rows = torch.Tensor | None  # output rows to keep; None keeps every node


@dataclass(frozen=True)
class Graph:
    """A whole graph as the model reads it: features, edges, and the edge attributes when the
    model reads them (None otherwise)."""

    x: torch.Tensor
    edge_index: torch.Tensor
    edge_attr: torch.Tensor | None = None

    @classmethod
    def read_by(cls, model: nn.Module, data: Data) -> Graph:
        return cls(data.x, data.edge_index, read_attributes(model, data))


@dataclass(frozen=True)
class Step:
    """One optimiser step's input: the model is called on `inputs` (features and edges first)
    and `edge_attr` (for models that read edge attributes), and a node loss is taken at output
    `rows` against `labels` (None: the objective brings its own targets, as link prediction's
    node pairs)."""

    inputs: tuple[torch.Tensor, ...]
    rows: torch.Tensor | None = None
    labels: torch.Tensor | None = None
    edge_attr: torch.Tensor | None = None

    def run(self, network: nn.Module, *more: torch.Tensor) -> torch.Tensor:
        """The network's output on this step's inputs (then `more`)."""
        return network(*self.inputs, *more, **named_attributes(self.edge_attr))

    @property
    def x(self) -> torch.Tensor:
        return self.inputs[0]

    @property
    def edge_index(self) -> torch.Tensor:
        return self.inputs[1]

    def tensors(self) -> tuple[torch.Tensor, ...]:
        """The step's inputs, labels and edge attributes (what its memory figure counts)."""
        extra = tuple(t for t in (self.labels, self.edge_attr) if t is not None)
        return (*self.inputs, *extra)


class Feed(Protocol):
    """What the training loop asks of a feed; objectives also call `outputs` and `attention`."""

    compiles: bool  # its steps keep one shape, so a compiled model can run them
    # attention diagnostics of the trained model on a whole graph, run as the feed runs it:
    # (model, x, edge_index, labels, edge_attr, typed) -> the stored format (training.diagnostics)
    attention: Callable[..., dict[str, Any]]

    def steps(self) -> Iterator[Step]:
        """One epoch's steps."""
        ...

    def input_bytes(self, first: Step) -> int:
        """Bytes of the input tensors a training step holds, given the run's first step."""
        ...

    def outputs(self, network: nn.Module, graph: Graph, rows: Rows = None) -> torch.Tensor:
        """The model's outputs on a whole graph (all nodes, or these rows), without gradients."""
        ...

    def extras(self) -> dict[str, Any]:
        """What the run stores about its feed."""
        ...


class WholeGraphFeed:
    """Every step sees the whole training graph.

    `counted`: the tensors a step's memory figure counts as its inputs; the graph the run is
    scored on with all its labels (which validation reads every epoch) unless given otherwise.
    """

    compiles = True
    attention = staticmethod(attention_diagnostics)

    def __init__(self, step: Step, counted: tuple[torch.Tensor, ...] | None = None):
        self.step = step
        self.counted = step.tensors() if counted is None else counted

    def steps(self) -> Iterator[Step]:
        yield self.step

    def input_bytes(self, first: Step) -> int:
        return tensor_bytes(*self.counted)

    def outputs(self, network: nn.Module, graph: Graph, rows: Rows = None) -> torch.Tensor:
        named = named_attributes(graph.edge_attr)
        with torch.no_grad():
            if rows is None:
                return network(graph.x, graph.edge_index, **named)
            # only the last layer runs at the rows (the same logits as a full pass)
            return network(graph.x, graph.edge_index, None, rows, **named)

    def extras(self) -> dict[str, Any]:
        return {}


class SampledFeed:
    """Shuffled batches of the training rows with their sampled neighbourhoods; scoring runs
    exact inference in bounded memory (harness.training.inference).

    A model that ignores edges (MLP) gets plain node batches: no neighbours are drawn.
    Graph convolution gets the weights of its full graph's degrees (models.convolution).
    Every batch has another shape, so sampled steps are not compiled.
    """

    compiles = False
    attention = staticmethod(chunked_attention_diagnostics)

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
            inputs = (batch.x, edges) if weights is None else (batch.x, edges, weights)
            targets = torch.arange(batch.batch_size)
            attributes = batch.edge_attr if self.reads_attributes else None
            yield Step(inputs, targets, batch.y[: batch.batch_size], attributes)

    def input_bytes(self, first: Step) -> int:
        return tensor_bytes(*first.tensors())

    def outputs(self, network: nn.Module, graph: Graph, rows: Rows = None) -> torch.Tensor:
        logits = chunked_logits(network, graph.x, graph.edge_index, edge_attr=graph.edge_attr)
        return logits if rows is None else logits[rows]

    def extras(self) -> dict[str, Any]:
        """The sampler used and the mean batch size in nodes and edges over all steps."""
        steps = max(len(self.nodes), 1)
        return {
            "batching": {
                "sampler": sampler_in_use(),
                "sampled_nodes_per_step": sum(self.nodes) / steps,
                "sampled_edges_per_step": sum(self.edges) / steps,
                "steps_per_epoch": len(self.loader),
            }
        }


def node_feed(
    model: nn.Module,
    graph: Data,
    rows: torch.Tensor,
    labels: torch.Tensor,
    training: Training,
    seed: int,
    counted: tuple[torch.Tensor, ...],
) -> Feed:
    """The feed a node-level run's training settings ask for, over `graph` at `rows`."""
    if training.sampled:
        return SampledFeed(model, graph, rows, training, seed)
    attributes = read_attributes(model, graph)
    return WholeGraphFeed(Step((graph.x, graph.edge_index), rows, labels, attributes), counted)
