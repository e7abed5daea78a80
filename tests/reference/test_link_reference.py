"""Link prediction against outside references.

- ROC-AUC and average precision: scikit-learn's `roc_auc_score` and `average_precision_score`
  (scikit-learn user guide, "Metrics and scoring"), on the pair scores a trained run produced.
- Hits@K: the Open Graph Benchmark's definition (Hu et al., 2020, link property prediction
  evaluator): the share of positive pairs scored strictly above the K-th highest negative score,
  checked against a count by hand.
- Leakage: no held-out edge, in either direction, in the graph the model passes messages over
  while training, checked edge by edge against the graph the encoder actually received.
- A block model whose edges follow the classes: every graph contender ranks held-out edges
  above non-edges clearly better than chance (AUC 0.5), while an MLP on constant features
  gives every pair the same score, so exactly chance.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
import torch
from sklearn.metrics import average_precision_score, roc_auc_score

from harness.data import load_graph
from harness.data.edge_splits import edge_split
from harness.models.decoders import LinkModel, build_link_model
from harness.planning import expand, parse_suite
from harness.training.link_loss import fit_links, graph_view
from harness.training.link_metrics import fast_link_score, hits_at_k, link_score
from harness.training.runs import perform

GRAPH_KINDS = ("gat", "gatv2", "dot_product", "gcn", "sage")


def link_suite(contenders: dict, **data: object) -> dict:
    """A small link suite on a block model (fictional courier depots and shared routes)."""
    return {
        "name": "depot_routes",
        "seeds": 1,
        "task": "link_prediction",
        "data": {
            "source": "synthetic",
            "nodes": 160,
            "classes": 4,
            "average_degree": 8,
            "edge_homophily": 0.9,
            "feature_dimension": 8,
            "feature_signal": 1.0,
            "graph_seed": 1,
            **data,
        },
        "split": {"train": 0.8, "validation": 0.1, "test": 0.1},
        "training": {"epochs": 60, "patience": 60, "learning_rate": 0.02},
        "contenders": contenders,
    }


def contender(model: str, **options: object) -> dict:
    heads = {"heads": 2} if model in ("gat", "gatv2", "dot_product") else {}
    return {"model": model, "hidden": 8, "dropout": 0.0, **heads, **options}


def test_hits_at_k_equals_a_hand_count():
    positive = torch.tensor([0.9, 0.8, 0.6, 0.3])
    negative = torch.tensor([0.85, 0.6, 0.4, 0.2, 0.1])
    # K = 1: threshold 0.85, above it only 0.9 -> 1 of 4
    assert hits_at_k(positive, negative, 1) == 0.25
    # K = 2: threshold 0.6; 0.9 and 0.8 are above, 0.6 ties and is no hit -> 2 of 4
    assert hits_at_k(positive, negative, 2) == 0.5
    # K = 3: threshold 0.4; 0.9, 0.8, 0.6 -> 3 of 4
    assert hits_at_k(positive, negative, 3) == 0.75
    # fewer negatives than K: every positive counts (as OGB's evaluator does)
    assert hits_at_k(positive, negative, 6) == 1.0
    scores = torch.cat([positive, negative])
    labels = torch.tensor([1.0] * 4 + [0.0] * 5)
    assert link_score("hits_at_k", scores, labels, 2) == 0.5


@pytest.mark.parametrize("seed", range(8))
def test_the_per_epoch_scores_equal_scikit_learn(seed):
    generator = torch.Generator().manual_seed(seed)
    pairs = 20 + 10 * seed
    scores = torch.randint(0, 5, (pairs,), generator=generator).float()  # many ties
    if seed % 2:
        scores = torch.randn(pairs, generator=generator)
    labels = (torch.rand(pairs, generator=generator) < 0.4).float()
    labels[:2] = torch.tensor([1.0, 0.0])
    truth = labels.numpy() > 0.5
    expected = {
        "roc_auc": roc_auc_score(truth, scores.numpy()),
        "average_precision": average_precision_score(truth, scores.numpy()),
    }
    for name, value in expected.items():
        assert fast_link_score(name, scores, labels, 5) == pytest.approx(value, abs=1e-12)
        assert link_score(name, scores, labels, 5) == pytest.approx(value, abs=1e-12)


def test_stored_roc_auc_and_average_precision_equal_scikit_learn_on_the_run_scores():
    suite = parse_suite(link_suite({"attention": contender("gat")}), "links.toml")
    spec = expand(suite)[0]
    data = load_graph(spec.data)
    split = edge_split(data, spec.split, spec.link, spec.seed)
    torch.manual_seed(0)
    seen = graph_view(data, split.train_graph, spec)
    tested = graph_view(data, split.test_graph, spec)
    model = build_link_model(spec.options, spec.link, seen.width)
    result = fit_links(model, seen.data, tested.data, split, spec.training, spec.metric, spec.link)
    with torch.no_grad():
        scores = model(tested.data.x, tested.data.edge_index, split.test_pairs).numpy()
    truth = split.test_labels.numpy() > 0.5
    assert result.test_scores["roc_auc"] == pytest.approx(roc_auc_score(truth, scores), abs=1e-12)
    assert result.test_scores["average_precision"] == pytest.approx(
        average_precision_score(truth, scores), abs=1e-12
    )
    assert result.test_metric == result.test_scores["roc_auc"]


def undirected_set(edge_index: torch.Tensor) -> set[tuple[int, int]]:
    return {(min(a, b), max(a, b)) for a, b in edge_index.t().tolist()}


@pytest.mark.parametrize("kind", ("gat", "gcn", "sage"))
def test_no_held_out_edge_reaches_the_training_message_passing(kind, monkeypatch):
    suite = parse_suite(link_suite({"model": contender(kind)}), "links.toml")
    spec = expand(suite)[0]
    data = load_graph(spec.data)
    split = edge_split(data, spec.split, spec.link, spec.seed)
    held_out = split.validation_pairs[:, split.validation_labels > 0]
    held_out = torch.cat([held_out, split.test_pairs[:, split.test_labels > 0]], dim=1)
    received: list[torch.Tensor] = []
    original = LinkModel.encode

    def recording(self, x, edge_index):
        if self.training:
            received.append(edge_index.clone())
        return original(self, x, edge_index)

    monkeypatch.setattr(LinkModel, "encode", recording)
    perform(replace(spec, training=spec.training.model_copy(update={"epochs": 3})))
    assert len(received) == 3
    for graph in received:
        trained_on = {tuple(edge) for edge in graph.t().tolist()}
        for source, target in held_out.t().tolist():  # edge by edge, both directions
            assert (source, target) not in trained_on and (target, source) not in trained_on
    # the undirected pairs are split together: the training graph lists both directions
    train_pairs = {tuple(edge) for edge in split.train_graph.t().tolist()}
    assert all((b, a) in train_pairs for a, b in train_pairs)
    everything = undirected_set(data.edge_index)
    assert undirected_set(split.train_graph) | undirected_set(held_out) == everything
    assert not undirected_set(split.train_graph) & undirected_set(held_out)


def test_graph_contenders_beat_chance_and_a_blind_mlp_does_not():
    contenders = {kind: contender(kind) for kind in GRAPH_KINDS}
    contenders["blind"] = contender("mlp", feature_start="constant")
    suite = parse_suite(link_suite(contenders), "links.toml")
    auc = {spec.contender: perform(spec).test_scores["roc_auc"] for spec in expand(suite)}
    assert all(auc[kind] > 0.7 for kind in GRAPH_KINDS), auc
    assert auc["blind"] == pytest.approx(0.5, abs=1e-9), auc  # every pair scores the same
