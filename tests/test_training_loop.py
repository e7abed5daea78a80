"""The one training loop: every task of the schema trains through it, fed the whole graph or
sampled batches, under one early-stopping rule; a task that cannot compile records why."""

from __future__ import annotations

import ast
import copy
from pathlib import Path

import pytest

import harness.training.runs
from harness.planning import expand, parse_suite
from harness.schema.tasks import TASKS
from harness.training.loop import fit
from harness.training.runs import OBJECTIVES, as_trained, perform

# fictional Fernhill couriers: depots tagged with their parcel mix, routes between them
SUITES = {
    "node_classification": {
        "name": "loop_depots",
        "seeds": [1],
        "data": {"source": "synthetic", "nodes": 90, "classes": 3, "feature_dimension": 6},
        "training": {"epochs": 30, "patience": 4},
        "contenders": {"attention": {"model": "gat", "heads": 2, "hidden": 4}},
    },
    "link_prediction": {
        "name": "loop_routes",
        "seeds": [1],
        "task": "link_prediction",
        "data": {"source": "synthetic", "nodes": 80, "classes": 3, "feature_dimension": 6},
        "split": {"train": 0.8, "validation": 0.1, "test": 0.1},
        "link": {"decoder": "mlp", "hits_k": 5},
        "training": {"epochs": 30, "patience": 4, "learning_rate": 0.02},
        "contenders": {"attention": {"model": "gat", "heads": 2, "hidden": 4}},
    },
    "graph_classification": {
        "name": "loop_boards",
        "seeds": [1],
        "task": "graph_classification",
        "data": {"source": "synthetic_graphs", "graphs": 40, "motifs": ["cycle", "clique"]},
        "graphs": {"batch_size": 8},
        "training": {"epochs": 30, "patience": 4, "learning_rate": 0.02},
        "contenders": {"attention": {"model": "gat", "heads": 2, "hidden": 4}},
    },
}
SAMPLED = {"batching": "sampled", "batch_size": 16, "fanout": [3, 3]}
# every task with its feeds: sampled batches where the task takes them
CASES = [
    ("node_classification", {}, "WholeGraphFeed"),
    ("node_classification", SAMPLED, "SampledFeed"),
    ("link_prediction", {}, "WholeGraphFeed"),
    ("graph_classification", {}, "GraphBatchFeed"),
]
TRAINING = Path(harness.training.runs.__file__).parent


def spec_of(task: str, training: dict | None = None):
    raw = copy.deepcopy(SUITES[task])
    raw["training"].update(training or {})
    return expand(parse_suite(raw, f"{raw['name']}.toml"))[0]


def test_every_task_of_the_registry_has_an_objective_and_the_cases_cover_them():
    assert set(TASKS) == {task for task, _, _ in CASES}
    assert {kind.objective for kind in TASKS.values()} == set(OBJECTIVES)
    sampled = {task for task, batching, _ in CASES if batching}
    assert sampled == {task for task, kind in TASKS.items() if kind.sampled_batches}


@pytest.mark.parametrize(("task", "batching", "feed"), CASES)
def test_every_task_trains_through_the_one_loop(monkeypatch, task, batching, feed):
    """The early-stopping rule checked is the patience criterion of Prechelt, "Early stopping -
    but when?" (Neural Networks: Tricks of the Trade, 1998): stop once `patience` epochs passed
    without a new best validation score, keep the best epoch's weights (from memory)."""
    feeds = []

    def watched_fit(model, given_feed, *rest):
        feeds.append(type(given_feed).__name__)
        return fit(model, given_feed, *rest)

    monkeypatch.setattr(harness.training.runs, "fit", watched_fit)
    spec = spec_of(task, batching)
    result = perform(spec)
    assert feeds == [feed]
    assert set(result.test_scores) == set(TASKS[task].metric_names)  # every metric the task defines
    curve, training = result.curve, spec.training
    assert len(curve) == result.epochs
    assert result.best_epoch == 1 + curve.index(max(curve))  # the first best epoch
    assert result.epochs == min(training.epochs, result.best_epoch + training.patience)
    # the best weights are back: the final validation score is the best epoch's
    assert result.val_metric == pytest.approx(max(curve), abs=1e-9)
    assert result.extras["compile"] == {"mode": "eager", "seconds": 0.0}
    assert result.peak_mb > 0 and result.seconds_per_epoch > 0


@pytest.mark.parametrize("task", sorted(TASKS))
def test_tuning_runs_of_every_task_never_score_the_test_set(task):
    result = perform(spec_of(task, {"epochs": 3}), validation_only=True)
    assert len(result.curve) == 3 and result.val_metric == result.val_metric
    assert all(score != score for score in result.test_scores.values())  # NaN: no test set


@pytest.mark.parametrize("task", [name for name, kind in TASKS.items() if not kind.compiles])
def test_a_task_that_does_not_compile_records_why_and_is_stored_as_eager(task):
    spec = spec_of(task, {"compile": True, "epochs": 3})
    eager = spec_of(task, {"compile": False, "epochs": 3})
    assert spec.key != eager.key  # asking to compile is part of the key, as for node runs
    result = perform(spec)
    reason = TASKS[task].no_compile_reason
    assert reason and not result.compiled
    assert result.extras["compile"] == {"mode": "eager", "seconds": 0.0, "warning": reason}
    assert as_trained(spec, result).key == eager.key
    assert result.curve == perform(eager).curve


def test_only_the_loop_steps_an_optimiser_and_only_one_rule_stops_early():
    """No second training loop or early-stopping code hides in the training stage."""
    stepping, stopping = set(), set()
    for path in sorted(TRAINING.glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Attribute) and node.attr in ("backward", "Adam", "SGD"):
                stepping.add(path.name)
            if isinstance(node, ast.Attribute) and node.attr == "patience":
                stopping.add(path.name)
    assert stepping == {"loop.py"}
    assert stopping <= {"loop.py", "stopping.py"}
