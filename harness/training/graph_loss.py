"""Graph classification's objective and feed: cross-entropy over batches of training graphs
(PyG's DataLoader, shuffled per epoch from the run's seed), the suite's metric on the validation
graphs every epoch, every metric of the task and the class probabilities of the test graphs at
the end; and how a graph run is set up for the one loop (harness.training.loop)."""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

import numpy as np
import torch
from torch import nn
from torch_geometric.loader import DataLoader

from harness.data.collection import GraphCollection
from harness.data.graph_splits import make_graph_split
from harness.data.graph_starts import started_collection
from harness.data.splits import Split
from harness.models.generated import generated_modules_in
from harness.models.graph_level import build_graph_model
from harness.planning import RunSpec
from harness.results import NodePredictions
from harness.schema.tasks import GraphOptions, task_kind
from harness.training.compiled import Forward
from harness.training.edge_inputs import check_edge_inputs, edge_width
from harness.training.feeding import Step
from harness.training.objectives import Loss, Prepared, Scores
from harness.training.resources import tensor_bytes


def graph_loss(network: nn.Module, step: Step) -> torch.Tensor:
    return nn.functional.cross_entropy(step.run(network, len(step.labels)), step.labels)


class GraphBatchFeed:
    """Shuffled batches of the training graphs, `batch_size` graphs a step; the inputs of a
    step are the batch's features, edges and batch vector (node -> graph in the batch). Every
    batch has another shape, so graph steps are not compiled."""

    compiles = False

    def __init__(
        self,
        collection: GraphCollection,
        rows: torch.Tensor,
        batch_size: int,
        seed: int,
        reads_attributes: bool,
    ):
        self.reads_attributes = reads_attributes
        self.loader = DataLoader(
            collection.dataset().index_select(rows),
            batch_size=batch_size,
            shuffle=True,
            generator=torch.Generator().manual_seed(seed),
        )

    def steps(self) -> Iterator[Step]:
        for batch in self.loader:
            attributes = batch.edge_attr if self.reads_attributes else None
            yield Step(
                (batch.x, batch.edge_index, batch.batch), labels=batch.y, edge_attr=attributes
            )

    def input_bytes(self, first: Step) -> int:
        return tensor_bytes(*first.tensors())

    def extras(self) -> dict[str, Any]:
        return {"batches_per_epoch": len(self.loader)}


def batch_logits(
    network: nn.Module, collection: GraphCollection, rows: torch.Tensor, batch_size: int
) -> torch.Tensor:
    """Class logits of the graphs `rows`, in their order, a batch at a time, without gradients."""
    if len(rows) == 0:
        return torch.empty(0, int(network.classifier.out_features))
    loader = DataLoader(collection.dataset().index_select(rows), batch_size=batch_size)
    reads = network.encoder.edge_width > 0
    with torch.no_grad():
        return torch.cat(
            [
                network(
                    batch.x,
                    batch.edge_index,
                    batch.batch,
                    batch.num_graphs,
                    batch.edge_attr if reads else None,
                )
                for batch in loader
            ]
        )


class GraphObjective:
    """Scored on the collection's validation and test graphs."""

    def __init__(
        self, collection: GraphCollection, split: Split, metric: str, task: str, batch_size: int
    ):
        self.collection, self.split, self.batch_size = collection, split, batch_size
        self.kind = task_kind(task)
        self.metric = metric
        self.facts = {"classes": len(collection.class_names)}

    def epoch_loss(self) -> Loss:
        return graph_loss

    def probabilities(self, network: nn.Module, rows: torch.Tensor) -> np.ndarray:
        logits = batch_logits(network, self.collection, rows, self.batch_size)
        return torch.softmax(logits.double(), dim=1).numpy()

    def labels(self, rows: torch.Tensor) -> np.ndarray:
        return self.collection.y[rows].numpy()

    def validate(self, network: nn.Module) -> float:
        rows = self.split.validation
        probabilities = self.probabilities(network, rows)
        return self.kind.metric(self.metric).score(probabilities, self.labels(rows), self.facts)

    def target_bytes(self) -> int:
        return 0  # the labels travel in the feed's steps

    def scores(self, forward: Forward) -> Scores:
        validation = forward.guarded(self.validate)
        test = self.split.test
        if len(test) == 0:  # tuning: the test graphs are never read
            tested = {name: float("nan") for name in self.kind.metric_names}
            return Scores(self.metric, validation, tested)
        probabilities = forward.guarded(lambda network: self.probabilities(network, test))
        truth = self.labels(test)
        tested = {
            metric.name: metric.score(probabilities, truth, self.facts)
            for metric in self.kind.metrics
        }
        predictions = NodePredictions(test.numpy(), probabilities, len(self.collection))
        return Scores(self.metric, validation, tested, predictions=predictions)


def prepare_graph_run(
    spec: RunSpec, collection: GraphCollection, validation_only: bool
) -> Prepared:
    """Split and initialisation from the spec's seed; `validation_only` (tuning) drops the test
    graphs before training."""
    split = make_graph_split(collection, spec.split, spec.seed)
    if validation_only:
        split = Split(split.train, split.validation, split.train[:0])
    started, width = started_collection(collection, spec.options, spec.seed, spec.hop_cache)
    check_edge_inputs(started.storage, spec.options, spec.contender)
    torch.manual_seed(spec.seed)
    with generated_modules_in(spec.hop_cache):
        model = build_graph_model(
            spec.options, width, len(collection.class_names), edge_width(started.storage)
        )
    options = spec.link or GraphOptions()
    reads = model.encoder.edge_width > 0
    feed = GraphBatchFeed(started, split.train, options.batch_size, spec.seed, reads)
    objective = GraphObjective(
        started, split, spec.metric, spec.task, options.evaluation_batch_size
    )
    return Prepared(model, feed, objective, dict)
