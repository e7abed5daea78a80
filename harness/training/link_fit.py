"""One link prediction run: encoder + decoder trained with binary cross-entropy, full batch.

Each epoch scores the training edges against fresh negatives (non-edges of the training graph,
`negatives_per_positive` per edge), so the model never sees the same negatives twice; early
stopping and the reported figures use the split's fixed validation and test negatives.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from contextlib import nullcontext
from dataclasses import replace

import torch
from pydantic import BaseModel
from torch import nn
from torch_geometric.data import Data
from torch_geometric.utils import negative_sampling

from harness.data import load_graph
from harness.data.edge_splits import NEGATIVES_RANDOM, EdgeSplit
from harness.data.feature_starts import StartedGraph, contender_graph
from harness.data.inductive_edges import EDGE_SPLITS
from harness.models.decoders import LinkModel, build_link_model
from harness.planning import RunSpec
from harness.schema.model_kinds import attends
from harness.schema.training import Training
from harness.training.diagnostics import attention_diagnostics
from harness.training.fit import RunResult
from harness.training.link_metrics import fast_link_score, link_score, link_scores
from harness.training.resources import ActivationMeter, step_peak_mb, tensor_bytes
from harness.training.stopping import BestWeights

LABELS_NOTE = "same-label share skipped: link prediction uses no node labels"


def training_pairs(split: EdgeSplit, nodes: int, ratio: int) -> tuple[torch.Tensor, torch.Tensor]:
    """The training edges and fresh negatives, among the training nodes alone when the split
    names them (inductive), with labels."""
    positive = split.train_positive
    if split.train_nodes is None:
        negative = negative_sampling(split.train_graph, nodes, positive.size(1) * ratio)
    else:
        local = torch.full((nodes,), -1, dtype=torch.long)
        local[split.train_nodes] = torch.arange(len(split.train_nodes))
        drawn = negative_sampling(
            local[split.train_graph], len(split.train_nodes), positive.size(1) * ratio
        )
        negative = split.train_nodes[drawn]
    pairs = torch.cat([positive, negative], dim=1)
    labels = torch.cat([torch.ones(positive.size(1)), torch.zeros(negative.size(1))])
    return pairs, labels


def fit_links(
    model: LinkModel,
    seen: Data,
    tested: Data,
    split: EdgeSplit,
    training: Training,
    metric: str,
    link: BaseModel,
    on_epoch: Callable[[int, float], None] | None = None,
) -> RunResult:
    """Train until `epochs` or `patience` epochs without validation gain; restore best weights.

    `seen`: the contender's view of the training graph (training edges only), used for
    training and validation; `tested`: its view of the test message-passing graph.
    """
    optimizer = torch.optim.Adam(
        model.parameters(), lr=training.learning_rate, weight_decay=training.weight_decay
    )
    loss_of = nn.BCEWithLogitsLoss()
    best = BestWeights(model, training.patience, on_epoch)
    meter = ActivationMeter()
    measured = torch.autograd.graph.saved_tensors_hooks(meter.pack, meter.unpack)
    started = time.perf_counter()
    epoch = 0
    for epoch in range(1, training.epochs + 1):
        pairs, labels = training_pairs(split, seen.num_nodes, link.negatives_per_positive)
        model.train()
        optimizer.zero_grad()
        with measured if epoch == 1 else nullcontext():  # activations of the first step
            loss = loss_of(model(seen.x, seen.edge_index, pairs), labels)
        loss.backward()
        optimizer.step()
        model.eval()
        with torch.no_grad():
            scores = model(seen.x, seen.edge_index, split.validation_pairs)
        validation = fast_link_score(metric, scores, split.validation_labels, link.hits_k)
        if best.should_stop(epoch, validation):
            break
    train_seconds = time.perf_counter() - started
    best.restore()
    with torch.no_grad():
        validation_scores = model(seen.x, seen.edge_index, split.validation_pairs)
        test_scores = link_scores(
            model(tested.x, tested.edge_index, split.test_pairs), split.test_labels, link.hits_k
        )
    inputs = tensor_bytes(seen.x, seen.edge_index, pairs, labels)
    return RunResult(
        val_metric=link_score(metric, validation_scores, split.validation_labels, link.hits_k),
        test_metric=test_scores[metric],
        test_scores=test_scores,
        epochs=epoch,
        best_epoch=best.best_epoch,
        seconds=time.perf_counter() - started,
        seconds_per_epoch=train_seconds / epoch,
        params=sum(p.numel() for p in model.parameters()),
        peak_mb=step_peak_mb(model, inputs, meter.bytes),
        curve=best.curve,
        extras={"link": {"hits_k": link.hits_k, "test_pairs": int(split.test_pairs.size(1))}},
    )


def graph_view(data: Data, edge_index: torch.Tensor, spec: RunSpec) -> StartedGraph:
    """The contender's view (feature start, hop edges) of `data` with only these edges."""
    graph = Data(x=data.x, edge_index=edge_index, y=data.y, num_nodes=data.num_nodes)
    return contender_graph(graph, spec.options, spec.seed, spec.hop_cache)


def perform_links(
    spec: RunSpec,
    on_epoch: Callable[[int, float], None] | None = None,
    validation_only: bool = False,
) -> RunResult:
    """Data, edge split, initialisation from the spec's seed, then fit; test pairs are never
    scored with `validation_only` (tuning)."""
    data = load_graph(spec.data)
    splitter = EDGE_SPLITS[spec.setting]
    split = splitter(data, spec.split, spec.link, spec.seed, tuning=validation_only)
    torch.manual_seed(spec.seed)
    NEGATIVES_RANDOM.seed(spec.seed)  # the fresh training negatives (PyG's draws)
    seen = graph_view(data, split.train_graph, spec)  # features and hops from training edges
    tested = graph_view(data, split.test_graph, spec) if not validation_only else seen
    model = build_link_model(
        spec.options, spec.link, seen.width, seen.embedding_rows, spec.training.kernel
    )
    result = fit_links(
        model, seen.data, tested.data, split, spec.training, spec.metric, spec.link, on_epoch
    )
    if attends(spec.model):
        graph = tested.data
        unlabelled = torch.full((graph.num_nodes,), -1, dtype=torch.long)
        diagnostics = attention_diagnostics(model.encoder, graph.x, graph.edge_index, unlabelled)
        attention = {**diagnostics, "note": LABELS_NOTE}
        result = replace(result, extras={**result.extras, "attention": attention})
    if spec.training.kernel == "sparse":
        result = replace(result, extras={**result.extras, "kernel": "sparse"})
    return result
