"""Link prediction's objective: an encoder and a pair decoder trained with binary cross-entropy
on the whole training graph; and how a link run is set up for the one loop.

Each epoch scores the training edges against fresh negatives (non-edges of the training graph,
`negatives_per_positive` per edge), so the model never sees the same negatives twice; early
stopping and the reported figures use the split's fixed validation and test negatives.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import torch
from pydantic import BaseModel
from torch import nn
from torch_geometric.data import Data
from torch_geometric.utils import negative_sampling

from harness.data.edge_splits import NEGATIVES_RANDOM, EdgeSplit
from harness.data.feature_starts import StartedGraph, contender_graph
from harness.data.inductive_edges import EDGE_SPLITS
from harness.models.decoders import LinkModel, build_link_model
from harness.planning import RunSpec
from harness.results import RunResult
from harness.schema.model_kinds import attends
from harness.schema.training import Training
from harness.training.compiled import Forward
from harness.training.feeding import Feed, Step, WholeGraphFeed
from harness.training.link_metrics import fast_link_score, link_score, link_scores
from harness.training.loop import fit
from harness.training.objectives import Loss, Prepared, Scores
from harness.training.resources import tensor_bytes

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


class LinkObjective:
    """Validation pairs scored on `seen` (the training graph), test pairs on `tested`.

    Pairs are scored on embeddings of the whole graph, so it takes a whole-graph feed.
    """

    def __init__(
        self, seen: Data, tested: Data, split: EdgeSplit, metric: str, link: BaseModel
    ) -> None:
        self.seen, self.tested, self.split = seen, tested, split
        self.metric, self.link = metric, link
        self.pairs, self.labels = split.train_positive[:, :0], torch.zeros(0)

    def epoch_loss(self) -> Loss:
        pairs, labels = training_pairs(
            self.split, self.seen.num_nodes, self.link.negatives_per_positive
        )
        self.pairs, self.labels = pairs, labels

        def loss(network: nn.Module, step: Step) -> torch.Tensor:
            scores = step.run(network, pairs)
            return nn.functional.binary_cross_entropy_with_logits(scores, labels)

        return loss

    def validate(self, network: nn.Module) -> float:
        with torch.no_grad():
            scores = network(self.seen.x, self.seen.edge_index, self.split.validation_pairs)
        return fast_link_score(self.metric, scores, self.split.validation_labels, self.link.hits_k)

    def target_bytes(self) -> int:
        return tensor_bytes(self.pairs, self.labels)  # the last epoch's training pairs

    def scores(self, forward: Forward) -> Scores:
        seen, tested, split, hits_k = self.seen, self.tested, self.split, self.link.hits_k

        def pair_scores(network: nn.Module) -> tuple[torch.Tensor, torch.Tensor]:
            with torch.no_grad():
                return (
                    network(seen.x, seen.edge_index, split.validation_pairs),
                    network(tested.x, tested.edge_index, split.test_pairs),
                )

        validation_scores, test_scores = forward.guarded(pair_scores)
        validation = link_score(self.metric, validation_scores, split.validation_labels, hits_k)
        tested = link_scores(test_scores, split.test_labels, hits_k)
        extras = {"link": {"hits_k": hits_k, "test_pairs": int(split.test_pairs.size(1))}}
        return Scores(self.metric, validation, tested, extras)


def link_parts(
    seen: Data, tested: Data, split: EdgeSplit, metric: str, link: BaseModel
) -> tuple[Feed, LinkObjective]:
    """The feed and objective of a link model's training: `seen` is the contender's view of
    the training graph (training edges only), used for training and validation; `tested` its
    view of the test message-passing graph."""
    feed = WholeGraphFeed(Step((seen.x, seen.edge_index)))
    return feed, LinkObjective(seen, tested, split, metric, link)


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
    """Train a link model with the one loop (arguments as for link_parts and loop.fit)."""
    feed, objective = link_parts(seen, tested, split, metric, link)
    return fit(model, feed, objective, training, on_epoch)


def graph_view(data: Data, edge_index: torch.Tensor, spec: RunSpec) -> StartedGraph:
    """The contender's view (feature start, hop edges) of `data` with only these edges."""
    graph = Data(x=data.x, edge_index=edge_index, y=data.y, num_nodes=data.num_nodes)
    return contender_graph(graph, spec.options, spec.seed, spec.hop_cache)


@dataclass(frozen=True)
class LinkRun:
    """A link run's pieces that its diagnostics read after training."""

    spec: RunSpec
    model: LinkModel
    tested: Data
    feed: Feed

    def diagnose(self) -> dict[str, Any]:
        """Attention measures of the encoder (kinds that attend), on the test graph."""
        if not attends(self.spec.model):
            return {}
        graph = self.tested
        unlabelled = torch.full((graph.num_nodes,), -1, dtype=torch.long)
        diagnostics = self.feed.attention(self.model.encoder, graph.x, graph.edge_index, unlabelled)
        return {"attention": {**diagnostics, "note": LABELS_NOTE}}


def prepare_link_run(spec: RunSpec, data: Data, validation_only: bool) -> Prepared:
    """Edge split and initialisation from the spec's seed; test pairs are never scored with
    `validation_only` (tuning)."""
    splitter = EDGE_SPLITS[spec.setting]
    split = splitter(data, spec.split, spec.link, spec.seed, tuning=validation_only)
    torch.manual_seed(spec.seed)
    NEGATIVES_RANDOM.seed(spec.seed)  # the fresh training negatives (PyG's draws)
    seen = graph_view(data, split.train_graph, spec)  # features and hops from training edges
    tested = graph_view(data, split.test_graph, spec) if not validation_only else seen
    model = build_link_model(
        spec.options, spec.link, seen.width, seen.embedding_rows, spec.training.kernel
    )
    feed, objective = link_parts(seen.data, tested.data, split, spec.metric, spec.link)
    return Prepared(model, feed, objective, LinkRun(spec, model, tested.data, feed).diagnose)
