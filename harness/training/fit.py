"""One run: node classification with Adam and early stopping on validation, fed the whole
graph or neighbour-sampled batches at each step (harness.training.feeding)."""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import torch
from torch import nn
from torch_geometric.data import Data

from harness.data import load_graph
from harness.data.feature_starts import contender_graph
from harness.data.inductive import measure_arrival, training_subgraph
from harness.data.splits import Split, make_split
from harness.models import build_model
from harness.models.generated import generated_modules_in
from harness.planning import RunSpec
from harness.schema.model_kinds import MODEL_KINDS, attends
from harness.schema.training import Training
from harness.training.compiled import (
    Forward,
    compile_record,
    compile_share,
    use_compile_cache,
)
from harness.training.diagnostics import attention_diagnostics, chunked_attention_diagnostics
from harness.training.edge_inputs import (
    check_edge_inputs,
    edge_width,
    named_attributes,
    read_attributes,
)
from harness.training.feeding import Step, make_feed
from harness.training.inference import chunked_logits
from harness.training.metrics import fast_score, score, scores_of_test_nodes
from harness.training.resources import (
    ActivationMeter,
    peak_resident_mb,
    reset_peak_resident,
    step_peak_mb,
    tensor_bytes,
)


@dataclass(frozen=True)
class NodePredictions:
    """Class probabilities (one row per node) of some nodes of a graph of `graph_nodes`."""

    nodes: np.ndarray
    probabilities: np.ndarray
    graph_nodes: int

    def as_dict(self) -> dict[str, list]:
        return {
            "nodes": self.nodes.tolist(),
            "probabilities": self.probabilities.astype(float).round(4).tolist(),
        }


@dataclass(frozen=True)
class RunResult:
    """What one run measured, with the best epoch's weights restored: `val_metric` and
    `test_metric` are the suite's metric, `test_scores` every metric on the test nodes (NaN
    without test nodes), `peak_mb` a training step's tensor memory (resources.step_peak_mb)."""

    val_metric: float
    test_metric: float
    test_scores: dict[str, float]
    epochs: int
    best_epoch: int
    seconds: float
    seconds_per_epoch: float
    params: int
    peak_mb: float
    curve: list[float] = field(default_factory=list)
    extras: dict[str, Any] = field(default_factory=dict)
    compiled: bool = False  # whether training ran compiled to the end (no fall-back)
    predictions: NodePredictions | None = None  # of the test nodes, for the per-node breakdown


def snapshot(model: nn.Module) -> dict[str, torch.Tensor]:
    """A copy of the weights (a plain clone: four times cheaper than deepcopy of state_dict)."""
    return {name: tensor.detach().clone() for name, tensor in model.state_dict().items()}


def step_loss(model: nn.Module, step: Step) -> torch.Tensor:
    extra = () if step.edge_weight is None else (step.edge_weight,)  # only GCN batches have it
    logits = model(step.x, step.edge_index, *extra, **named_attributes(step.edge_attr))
    return nn.functional.cross_entropy(logits[step.rows], step.labels)


def fit(
    model: nn.Module,
    data: Data,
    split: Split,
    training: Training,
    metric: str,
    on_epoch: Callable[[int, float], None] | None = None,
    training_graph: Data | None = None,
    seed: int = 0,
) -> RunResult:
    """Train until `epochs` or `patience` epochs without validation gain; restore best weights.

    `training_graph` (inductive runs): the training forward pass sees only this graph, and the
    loss is taken at its `train_rows`; validation and test still use `data`, the full graph.
    Sampled batching draws batches from that graph with `seed` and scores validation and test
    by exact chunked inference (harness.training.inference); full batching scores validation
    with the last layer run for the validation rows only (the same logits as a full pass).

    `on_epoch(epoch, validation_score)` may raise to stop the run early (used by pruning).
    Peak memory is the tensor memory of a training step: parameters, gradients, Adam state,
    inputs (the graph, or the first sampled batch), and the activations autograd keeps for
    backward (measured, not sampled, on the first step, which is always eager).

    With `training.compile` true, epochs from the second on run the compiled model (see
    harness.training.compiled); `compile_seconds` is what the second epoch took beyond a
    typical epoch, and is left out of `seconds_per_epoch`.
    """
    classes = int(data.y.max()) + 1
    optimizer = torch.optim.Adam(
        model.parameters(), lr=training.learning_rate, weight_decay=training.weight_decay
    )
    forward = Forward(model, training.compile is True and not training.sampled)
    x, edge_index, y = data.x, data.edge_index, data.y
    attributes = read_attributes(model, data)
    named = named_attributes(attributes)
    train_y, val_y = y[split.train], y[split.validation]
    seen = data if training_graph is None else training_graph
    seen_rows = split.train if training_graph is None else training_graph.train_rows
    feed = make_feed(model, seen, seen_rows, train_y, training, seed)

    def descend(network: nn.Module, step: Step) -> None:
        optimizer.zero_grad()
        step_loss(network, step).backward()
        optimizer.step()

    def validate(network: nn.Module) -> float:
        if training.sampled:
            logits = chunked_logits(model, x, edge_index, edge_attr=attributes)[split.validation]
        else:
            with torch.no_grad():
                logits = network(x, edge_index, None, split.validation, **named)
        return fast_score(metric, logits, val_y, classes)

    def logits_of_all() -> torch.Tensor:
        if training.sampled:
            return chunked_logits(model, x, edge_index, edge_attr=attributes)
        with torch.no_grad():
            return forward.guarded(lambda network: network(x, edge_index, **named))

    best_score, best_epoch, best_state = -float("inf"), 0, snapshot(model)
    curve: list[float] = []
    epoch_seconds: list[float] = []
    meter = ActivationMeter()
    inputs = tensor_bytes(x, edge_index, y, *(() if attributes is None else (attributes,)))
    started = time.perf_counter()
    epoch = 0
    for epoch in range(1, training.epochs + 1):
        epoch_started = time.perf_counter()
        model.train()
        for number, step in enumerate(feed.steps()):  # the whole graph, or sampled batches
            if epoch == 1 and number == 0:
                optimizer.zero_grad()
                with torch.autograd.graph.saved_tensors_hooks(meter.pack, meter.unpack):
                    loss = step_loss(model, step)
                inputs = tensor_bytes(*step.tensors()) if training.sampled else inputs
                loss.backward()
                optimizer.step()
            else:
                forward.guarded(lambda network, step=step: descend(network, step))
        model.eval()
        validation = validate(model) if epoch == 1 else forward.guarded(validate)
        epoch_seconds.append(time.perf_counter() - epoch_started)
        curve.append(validation)
        if validation > best_score:
            best_score, best_epoch = validation, epoch
            best_state = snapshot(model)
        if on_epoch is not None:
            on_epoch(epoch, validation)
        if epoch - best_epoch >= training.patience:
            break
    train_seconds = time.perf_counter() - started
    compile_seconds = compile_share(epoch_seconds) if forward.wanted else 0.0
    model.load_state_dict(best_state)
    logits = logits_of_all()
    test_logits, test_y = logits[split.test], y[split.test]
    tested, warnings = scores_of_test_nodes(test_logits, test_y, classes)
    predictions = None
    if len(test_y):
        probabilities = torch.softmax(test_logits, dim=1).numpy()
        predictions = NodePredictions(split.test.numpy(), probabilities, data.num_nodes)
    compiled = forward.mode == "compiled"
    extras: dict[str, Any] = {"compile": compile_record(compiled, compile_seconds, forward.warning)}
    if training.sampled:
        extras["batching"] = feed.extras()
    if warnings:
        extras["warnings"] = warnings
    return RunResult(
        val_metric=score(metric, logits[split.validation], val_y, classes),
        test_metric=tested[metric],
        test_scores=tested,
        epochs=epoch,
        best_epoch=best_epoch,
        seconds=time.perf_counter() - started,
        seconds_per_epoch=(train_seconds - compile_seconds) / epoch,
        params=sum(p.numel() for p in model.parameters()),
        peak_mb=step_peak_mb(model, inputs, meter.bytes),
        curve=curve,
        extras=extras,
        compiled=compiled,
        predictions=predictions,
    )


def as_trained(spec: RunSpec, result: RunResult) -> RunSpec:
    """The spec with the compile mode the run used: a run that fell back is stored as eager."""
    if spec.training.compile is True and not result.compiled:
        return replace(spec, training=spec.training.model_copy(update={"compile": False}))
    return spec


def perform(
    spec: RunSpec,
    on_epoch: Callable[[int, float], None] | None = None,
    validation_only: bool = False,
) -> RunResult:
    """Data, split and initialisation from the spec's seed, then fit.

    `validation_only` (tuning) drops the test nodes from the split before training: the test
    indices are never read, and the test scores are NaN.

    extras also get `threads` (torch threads of this run) and `peak_resident_mb` (the process's
    peak resident memory during the run, see harness.training.resources).
    """
    measured = reset_peak_resident()
    threads = torch.get_num_threads()
    if spec.training.compile is True:
        use_compile_cache(spec.hop_cache)
    data = load_graph(spec.data)
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
    inductive = None
    if spec.setting == "inductive":  # held-out nodes and their edges never reach training
        train_graph = training_subgraph(data, split)
        inductive = contender_graph(train_graph, spec.options, spec.seed, spec.hop_cache).data
    result = fit(
        model, started.data, split, spec.training, spec.metric, on_epoch, inductive, spec.seed
    )
    # arrival updates run the model on grown graphs without their edge attributes, and within
    # a hop radius: not for kinds that read attributes or every node
    local = spec.options.edge_attribute_use() == "none" and not MODEL_KINDS[spec.model].global_reach
    if inductive is not None and not validation_only and local:
        radius = spec.options.layers * spec.options.layer_radius()
        radius += MODEL_KINDS[spec.model].extra_hops
        arrival = measure_arrival(model, started.data, split, radius, seed=spec.seed)
        result = replace(result, extras={**result.extras, "arrival": arrival.as_dict()})
    if attends(spec.model):
        graph = started.data
        diagnose = chunked_attention_diagnostics if spec.training.sampled else attention_diagnostics
        attributes = read_attributes(model, graph)
        diagnostics = diagnose(model, graph.x, graph.edge_index, graph.y, attributes, data)
        result = replace(result, extras={**result.extras, "attention": diagnostics})
    resident = peak_resident_mb() if measured else None
    extras = {**result.extras, "threads": threads, "peak_resident_mb": resident}
    if spec.training.kernel == "sparse":  # scatter runs keep the extras they always had
        extras["kernel"] = "sparse"
    return replace(result, extras=extras)
