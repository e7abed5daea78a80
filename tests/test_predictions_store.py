"""Per-node predictions in the result store, over both back ends (SQLite file, PostgreSQL
schema): stored with their run in one transaction, keyed by run key, read only when asked."""

from __future__ import annotations

import numpy as np

from harness.storage import store
from harness.storage.database import has_table
from harness.storage.predictions import encode, load_predictions, to_text
from harness.training.fit import NodePredictions

SCORES = ("val_metric", "test_metric", "test_accuracy", "test_macro_f1", "test_roc_auc")
COSTS = ("seconds", "seconds_per_epoch", "peak_mb")


def record(key: str, seed: int = 0, contender: str = "convolution") -> dict:
    """A stored run with plain made-up figures."""
    names = {"suite": "couriers", "contender": contender, "key": key, "model": "gcn"}
    fields = {"options": {}, "point": {}, "seed": seed, "metric": "accuracy", "curve": []}
    counts = {"epochs": 3, "best_epoch": 2, "params": 9, "extras": {}}
    return names | fields | counts | dict.fromkeys(SCORES + COSTS, 0.5)


def predictions(seed: int) -> NodePredictions:
    generator = np.random.default_rng(seed)
    nodes = np.sort(generator.choice(50, 20, replace=False))
    return NodePredictions(nodes, generator.dirichlet(np.ones(3), 20).astype(np.float32), 50)


def test_predictions_travel_with_their_run(any_store):
    made = predictions(1)
    assert store.save_run(any_store, record("k1") | {"predictions": to_text(encode(made))})
    assert store.save_run(any_store, record("k2", seed=1))  # a run stored without any
    loaded = load_predictions(any_store, ["k1", "k2", "unknown"])
    assert list(loaded) == ["k1"]
    assert np.array_equal(loaded["k1"].nodes, made.nodes)
    half = made.probabilities.astype(np.float16).astype(np.float32)
    assert np.array_equal(loaded["k1"].probabilities, half)
    # runs load without them: the table of runs has no column for predictions
    assert "predictions" not in store.load_runs(any_store).columns


def test_a_run_stored_again_keeps_its_first_predictions(any_store):
    first, second = predictions(1), predictions(2)
    assert store.save_run(any_store, record("k1") | {"predictions": to_text(encode(first))})
    again = record("k1", contender="renamed") | {"predictions": to_text(encode(second))}
    assert store.save_run(any_store, again)  # same key, another contender name: a new run row
    assert np.array_equal(load_predictions(any_store, ["k1"])["k1"].nodes, first.nodes)


def test_a_store_without_predictions_reads_none_and_stays_unchanged(any_store):
    assert store.save_run(any_store, record("k1"))
    assert load_predictions(any_store, ["k1"]) == {}
    assert not has_table(any_store, "predictions")
