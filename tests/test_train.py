"""One run: determinism of a seed, early stopping, best weights restored, measured costs."""

from __future__ import annotations

import math

import pytest
import torch
from torch_geometric.nn import GCNConv

from harness.data import load_graph
from harness.data.splits import make_split
from harness.models import build_model
from harness.planning import expand, load_suite
from harness.schema.contenders import ConvolutionOptions, MLPOptions
from harness.schema.data import SyntheticData
from harness.schema.splits import FractionSplit
from harness.schema.training import Training
from harness.training.metrics import score
from harness.training.node_loss import fit_nodes
from harness.training.resources import MEBIBYTE
from harness.training.runs import perform


@pytest.fixture(scope="module")
def specs(tmp_path_factory, tiny_suite_text) -> dict:
    path = tmp_path_factory.mktemp("train") / "tiny.toml"
    path.write_text(tiny_suite_text)
    return {(s.contender, s.seed): s for s in expand(load_suite(path))}


def measured(result) -> tuple:
    """Every figure of a run except wall time."""
    return (
        result.val_metric,
        result.test_metric,
        result.test_scores,
        result.epochs,
        result.best_epoch,
        result.params,
        result.peak_mb,
        result.curve,
    )


@pytest.mark.parametrize("contender", ["attention", "convolution", "features_only"])
def test_same_seed_twice_gives_bit_identical_metrics(specs, contender):
    first, again = perform(specs[contender, 1]), perform(specs[contender, 1])
    assert measured(first) == measured(again)  # exact equality, not closeness


def test_seeds_change_split_and_initialisation(specs):
    spec_zero, spec_one = specs["convolution", 0], specs["convolution", 1]
    data = load_graph(spec_zero.data)
    split_zero = make_split(data, spec_zero.split, 0)
    split_one = make_split(data, spec_one.split, 1)
    assert not torch.equal(split_zero.train, split_one.train)
    assert perform(spec_zero).curve != perform(spec_one).curve


def test_contenders_share_the_split_of_a_seed(specs):
    """Pairing: the split is drawn from the seed alone, so every contender sees the same one."""
    data = load_graph(specs["attention", 0].data)
    for contender in ("convolution", "features_only"):
        spec = specs[contender, 0]
        same = make_split(data, spec.split, spec.seed)
        reference = make_split(data, specs["attention", 0].split, 0)
        for part in ("train", "validation", "test"):
            assert torch.equal(getattr(same, part), getattr(reference, part))


def small_problem(seed: int = 0):
    """150 nodes, 3 classes, 8 features; the torch seed is set for the model built next."""
    data = load_graph(
        SyntheticData(source="synthetic", nodes=150, classes=3, feature_dimension=8, graph_seed=2)
    )
    split = make_split(data, FractionSplit(train=0.3, validation=0.3, test=0.4), seed)
    torch.manual_seed(seed)
    return data, split


def test_early_stopping_restores_the_best_weights():
    data, split = small_problem()
    model = build_model(ConvolutionOptions(model="gcn", hidden=8), 8, 3)
    training = Training(epochs=300, patience=5, learning_rate=0.05)
    result = fit_nodes(model, data, split, training, "accuracy")
    assert result.epochs < 300  # stopped early
    assert result.epochs - result.best_epoch == 5
    assert len(result.curve) == result.epochs
    # the restored model scores what its best epoch scored, and that is the curve's maximum
    assert result.val_metric == pytest.approx(max(result.curve), abs=1e-12)
    assert result.curve[result.best_epoch - 1] == max(result.curve)
    assert result.best_epoch == result.curve.index(max(result.curve)) + 1  # first best kept
    model.eval()
    with torch.no_grad():
        logits = model(data.x, data.edge_index)
    assert score("accuracy", logits[split.test], data.y[split.test], 3) == result.test_metric


def test_costs_are_measured():
    """Parameters counted by hand; peak memory at least parameters, gradients, Adam state, inputs.

    GCNConv(8, 8): 8*8 weights + 8 biases = 72; GCNConv(8, 3): 8*3 + 3 = 27; total 99.
    """
    data, split = small_problem()
    model = build_model(ConvolutionOptions(model="gcn", hidden=8), 8, 3)
    assert all(isinstance(layer, GCNConv) for layer in model.layers)
    result = fit_nodes(model, data, split, Training(epochs=10, patience=10), "macro_f1")
    assert result.params == 99
    inputs = sum(t.numel() * t.element_size() for t in (data.x, data.edge_index, data.y))
    assert result.peak_mb * MEBIBYTE > 99 * 4 * 4 + inputs
    assert result.peak_mb < 5  # a 150-node graph: well under 5 MB of tensors
    assert result.epochs == 10 and result.seconds_per_epoch > 0
    assert result.seconds >= result.seconds_per_epoch * result.epochs
    assert set(result.test_scores) == {"accuracy", "macro_f1", "roc_auc"}
    assert result.test_metric == result.test_scores["macro_f1"]
    assert not any(math.isnan(v) for v in result.test_scores.values())


def test_epoch_callback_can_stop_a_run():
    data, split = small_problem()

    class Enough(Exception):
        pass

    seen: list[tuple[int, float]] = []

    def on_epoch(epoch: int, validation: float) -> None:
        seen.append((epoch, validation))
        if epoch == 3:
            raise Enough

    model = build_model(MLPOptions(model="mlp", hidden=8), 8, 3)
    with pytest.raises(Enough):
        fit_nodes(model, data, split, Training(epochs=50, patience=50), "accuracy", on_epoch)
    assert [epoch for epoch, _ in seen] == [1, 2, 3]
