"""Node classification's objective: cross-entropy at the training nodes, the suite's metric at
the validation nodes every epoch, every node metric and the class probabilities of the test
nodes at the end; and how a node run is set up for the one loop (harness.training.loop)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import torch
from torch import nn
from torch_geometric.data import Data

from harness.data.feature_starts import StartedGraph, contender_graph
from harness.data.inductive import measure_arrival, training_subgraph
from harness.data.splits import Split, make_split
from harness.models import build_model
from harness.models.generated import generated_modules_in
from harness.planning import RunSpec
from harness.results import NodePredictions, RunResult
from harness.schema.model_kinds import MODEL_KINDS, attends
from harness.schema.training import Training
from harness.training.compiled import Forward
from harness.training.edge_inputs import check_edge_inputs, edge_width
from harness.training.feeding import Feed, Graph, Step, node_feed
from harness.training.loop import fit
from harness.training.metrics import fast_score, score, scores_of_test_nodes
from harness.training.objectives import Loss, Prepared, Scores


def node_loss(network: nn.Module, step: Step) -> torch.Tensor:
    return nn.functional.cross_entropy(step.run(network)[step.rows], step.labels)


class NodeObjective:
    """Scored on `data`, the full graph (`graph`: as the model reads it), at the split's
    validation and test nodes."""

    def __init__(self, feed: Feed, data: Data, graph: Graph, split: Split, metric: str):
        self.feed, self.data, self.graph, self.split, self.metric = feed, data, graph, split, metric
        self.classes = int(data.y.max()) + 1
        self.validation_labels = data.y[split.validation]

    def epoch_loss(self) -> Loss:
        return node_loss  # the targets are the training nodes' labels, the same every epoch

    def validate(self, network: nn.Module) -> float:
        logits = self.feed.outputs(network, self.graph, self.split.validation)
        return fast_score(self.metric, logits, self.validation_labels, self.classes)

    def target_bytes(self) -> int:
        return 0  # the labels travel in the feed's steps

    def scores(self, forward: Forward) -> Scores:
        split = self.split
        logits = forward.guarded(lambda network: self.feed.outputs(network, self.graph))
        test_logits, test_labels = logits[split.test], self.data.y[split.test]
        tested, warnings = scores_of_test_nodes(test_logits, test_labels, self.classes)
        predictions = None
        if len(test_labels):
            probabilities = torch.softmax(test_logits, dim=1).numpy()
            predictions = NodePredictions(split.test.numpy(), probabilities, self.data.num_nodes)
        validation = score(
            self.metric, logits[split.validation], self.validation_labels, self.classes
        )
        extras: dict[str, Any] = {"warnings": warnings} if warnings else {}
        return Scores(self.metric, validation, tested, extras, predictions)


def node_parts(
    model: nn.Module,
    data: Data,
    split: Split,
    training: Training,
    metric: str,
    training_graph: Data | None = None,
    seed: int = 0,
) -> tuple[Feed, NodeObjective]:
    """The feed and objective of a node classifier's training.

    `training_graph` (inductive runs): the training forward pass sees only this graph, and the
    loss is taken at its `train_rows`; validation and test still use `data`, the full graph.
    Sampled batching draws batches from that graph with `seed` and scores validation and test
    by exact chunked inference (harness.training.inference).
    """
    seen = data if training_graph is None else training_graph
    seen_rows = split.train if training_graph is None else training_graph.train_rows
    graph = Graph.read_by(model, data)
    attributes = () if graph.edge_attr is None else (graph.edge_attr,)
    scored_graph = (data.x, data.edge_index, data.y, *attributes)
    feed = node_feed(model, seen, seen_rows, data.y[split.train], training, seed, scored_graph)
    return feed, NodeObjective(feed, data, graph, split, metric)


def fit_nodes(
    model: nn.Module,
    data: Data,
    split: Split,
    training: Training,
    metric: str,
    on_epoch: Callable[[int, float], None] | None = None,
    training_graph: Data | None = None,
    seed: int = 0,
) -> RunResult:
    """Train a node classifier with the one loop (arguments as for node_parts and loop.fit)."""
    feed, objective = node_parts(model, data, split, training, metric, training_graph, seed)
    return fit(model, feed, objective, training, on_epoch)


@dataclass(frozen=True)
class NodeRun:
    """A node run's pieces that its diagnostics read after training."""

    spec: RunSpec
    model: nn.Module
    loaded: Data
    started: StartedGraph
    split: Split
    feed: Feed
    inductive: bool
    validation_only: bool

    def diagnose(self) -> dict[str, Any]:
        """New-node arrival (inductive runs) and attention measures (kinds that attend)."""
        extras: dict[str, Any] = {}
        spec, graph, kind = self.spec, self.started.data, MODEL_KINDS[self.spec.model]
        # arrival updates run the model on grown graphs without their edge attributes, and
        # within a hop radius: not for kinds that read attributes or every node
        local = spec.options.edge_attribute_use() == "none" and not kind.global_reach
        if self.inductive and not self.validation_only and local:
            radius = spec.options.layers * spec.options.layer_radius() + kind.extra_hops
            arrival = measure_arrival(self.model, graph, self.split, radius, seed=spec.seed)
            extras["arrival"] = arrival.as_dict()
        if attends(spec.model):
            read = Graph.read_by(self.model, graph)
            extras["attention"] = self.feed.attention(
                self.model, read.x, read.edge_index, graph.y, read.edge_attr, self.loaded
            )
        return extras


def prepare_node_run(spec: RunSpec, data: Data, validation_only: bool) -> Prepared:
    """Split and initialisation from the spec's seed; `validation_only` (tuning) drops the test
    nodes before training, so the test indices are never read and the test scores are NaN."""
    split = make_split(data, spec.split, spec.seed)
    if validation_only:
        split = Split(split.train, split.validation, split.train[:0])
    torch.manual_seed(spec.seed)
    classes = int(data.y.max()) + 1
    check_edge_inputs(data, spec.options, spec.contender)
    started = contender_graph(data, spec.options, spec.seed, spec.hop_cache)
    with generated_modules_in(spec.hop_cache):
        model = build_model(
            spec.options,
            started.width,
            classes,
            started.embedding_rows,
            spec.training.kernel,
            edge_width(data),
        )
    inductive = spec.setting == "inductive"
    seen = None
    if inductive:  # held-out nodes and their edges never reach training
        train_graph = training_subgraph(data, split)
        seen = contender_graph(train_graph, spec.options, spec.seed, spec.hop_cache).data
    feed, objective = node_parts(
        model, started.data, split, spec.training, spec.metric, seen, spec.seed
    )
    run = NodeRun(spec, model, data, started, split, feed, inductive, validation_only)
    return Prepared(model, feed, objective, run.diagnose)
