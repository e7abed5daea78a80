"""Leakage guard: no contender beats the Bayes-optimal accuracy of its data.

Two equally likely classes, one informative feature x_0 ~ N(-d/2, 1) or N(+d/2, 1) plus
pure-noise columns. The Bayes-optimal rule, sign(x_0), has accuracy Phi(d/2) (two Gaussians
with equal variance and priors; Duda, Hart and Stork, Pattern Classification, 2nd ed., 2.6).
The edges come from harness.data.synthetic.sample_edges with edge homophily 0.5 on two equal
classes: a neighbour's class is independent of a node's own, so the graph adds nothing and
Phi(d/2) bounds every contender. A test accuracy of a seed has standard error
sqrt(p (1 - p) / n_test) around its expectation (binomial); seeds share nodes, so their mean
gets the same standard error (conservative). A contender whose mean test accuracy exceeds
Phi(d/2) by more than 3 standard errors sees something it should not: labels leaking through
features, splits or model selection. The last test shows the guard fires on a real leak.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import torch
from scipy.stats import norm
from torch_geometric.data import Data
from torch_geometric.utils import coalesce, remove_self_loops, to_undirected

from harness.data.splits import make_split
from harness.data.synthetic import sample_edges
from harness.models import build_model
from harness.schema.contenders import (
    AttentionOptions,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)
from harness.schema.splits import FractionSplit
from harness.schema.training import Training
from harness.training.node_loss import fit_nodes

DISTANCE = 1.5
NODES = 600
SEEDS = (0, 1)
SPLIT = FractionSplit(train=0.3, validation=0.2, test=0.5)
TRAINING = Training(epochs=30, patience=15, learning_rate=0.02, weight_decay=5e-4)
CONTENDERS = {
    "attention": AttentionOptions(model="gat", heads=2, hidden=4),
    "dynamic_attention": AttentionOptions(model="gatv2", heads=2, hidden=4),
    "convolution": ConvolutionOptions(model="gcn", hidden=8),
    "neighbour_mean": NeighbourMeanOptions(model="sage", hidden=8),
    "features_only": MLPOptions(model="mlp", hidden=8),
}
BAYES = float(norm.cdf(DISTANCE / 2))
STANDARD_ERROR = math.sqrt(BAYES * (1 - BAYES) / (NODES * SPLIT.test))


def two_gaussians(leak: bool = False) -> Data:
    """The graph described above; with `leak`, the label is appended as a feature."""
    rng = np.random.default_rng(11)
    labels = rng.permutation(np.repeat([0, 1], NODES // 2))
    pairs, _ = remove_self_loops(torch.from_numpy(sample_edges(labels, NODES * 3, 0.5, rng)))
    features = rng.standard_normal((NODES, 4))
    features[:, 0] += np.where(labels == 1, DISTANCE / 2, -DISTANCE / 2)
    if leak:
        features = np.column_stack([features, labels])
    return Data(
        x=torch.from_numpy(features.astype(np.float32)),
        edge_index=coalesce(to_undirected(pairs, num_nodes=NODES), num_nodes=NODES),
        y=torch.from_numpy(labels.astype(np.int64)),
        num_nodes=NODES,
    )


def mean_test_accuracy(data: Data, options) -> float:
    scores = []
    for seed in SEEDS:
        split = make_split(data, SPLIT, seed)
        torch.manual_seed(seed)
        model = build_model(options, data.num_features, 2)
        scores.append(fit_nodes(model, data, split, TRAINING, "accuracy").test_scores["accuracy"])
    return float(np.mean(scores))


def test_the_graph_is_what_the_bound_assumes():
    """Edge homophily near 0.5 and the Bayes rule sign(x_0) near Phi(d/2) on every node."""
    data = two_gaussians()
    source, target = data.edge_index
    same = (data.y[source] == data.y[target]).double().mean().item()
    assert same == pytest.approx(0.5, abs=0.03)
    bayes_rule = ((data.x[:, 0] > 0).long() == data.y).double().mean().item()
    assert abs(bayes_rule - BAYES) < 3 * math.sqrt(BAYES * (1 - BAYES) / NODES)


def test_no_contender_beats_the_bayes_optimal_accuracy():
    torch.set_num_threads(1)
    data = two_gaussians()
    for name, options in CONTENDERS.items():
        accuracy = mean_test_accuracy(data, options)
        assert accuracy <= BAYES + 3 * STANDARD_ERROR, (
            f"{name}: mean test accuracy {accuracy:.3f} exceeds Phi(d/2) = {BAYES:.3f} by more "
            f"than 3 standard errors ({STANDARD_ERROR:.3f})"
        )
        # every contender should also learn the feature signal, or the bound tests nothing
        assert accuracy > 0.5 + 3 * STANDARD_ERROR, f"{name} learned nothing ({accuracy:.3f})"


def test_the_guard_fires_when_labels_leak_into_features():
    torch.set_num_threads(1)
    accuracy = mean_test_accuracy(two_gaussians(leak=True), CONTENDERS["features_only"])
    assert accuracy > BAYES + 3 * STANDARD_ERROR
