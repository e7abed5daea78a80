"""Per-node predictions in the result store, over both back ends (SQLite file, PostgreSQL
schema): stored with their run in one transaction, keyed by run key, read only when asked."""

from __future__ import annotations

import numpy as np
from sklearn.metrics import roc_auc_score

from harness.results import NodePredictions
from harness.storage import store
from harness.storage.database import has_table
from harness.storage.predictions import decode, encode, levels, load_predictions, to_text

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
    read = loaded["k1"].probabilities
    # 8-bit levels: each node's predicted class kept, every probability within 2/255
    assert np.array_equal(read.argmax(1), made.probabilities.argmax(1))
    assert np.abs(read - made.probabilities).max() <= 2 / 255
    assert np.allclose(read.sum(1), 1.0)
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


# written by the first encoding (float16, 10-byte header) for nodes 1, 4, 6 of 8 with the
# probabilities (0.5, 0.25, 0.25), (0.125, 0.75, 0.125), (0, 0, 1)
FLOAT16_BLOB = bytes.fromhex(
    "08000000030003000000fd377a585a000004e6d6b446020021011c00000010cf58cce0001200105d0025"
    "003187030000db1f1b96550a0478d70007a8e4443429954d00012c135b9f099d1fb6f37d010000000004595a"
)


def test_predictions_stored_in_the_first_encoding_still_read():
    read = decode(FLOAT16_BLOB)
    assert read.graph_nodes == 8
    assert read.nodes.tolist() == [1, 4, 6]
    expected = [[0.5, 0.25, 0.25], [0.125, 0.75, 0.125], [0.0, 0.0, 1.0]]
    assert read.probabilities.tolist() == expected  # exact in float16


def test_ties_and_near_ties_keep_the_predicted_class():
    # 0.4990 and 0.4985 round to the same level; a single class rounds to 255; tiny values
    # of many classes all round to level 0 but the top one
    # (0.49995, 0.50005) is a tie in float16, which stored the first class as predicted
    near = np.array(
        [[0.4990, 0.4985, 0.0025], [0.0, 1.0, 0.0], [0.49995, 0.50005, 0.0]], dtype=np.float32
    )
    many = np.full((1, 600), 1 / 600, dtype=np.float32)
    many[0, 17] += 1e-4
    for probabilities in (near, many):
        kept = decode(encode(NodePredictions(np.arange(len(probabilities)), probabilities, 5)))
        assert np.array_equal(kept.probabilities.argmax(1), probabilities.argmax(1))
    # 127.245, 127.1175, 0.6375 levels: floors 127, 127, 0, the largest remainder takes the
    # 255th level, then the tie at 127 is broken by one level from the runner-up
    assert levels(near).tolist() == [[128, 126, 1], [0, 255, 0], [127, 128, 0]]


def test_levels_sum_to_255_and_stay_within_two_levels_for_any_class_count():
    generator = np.random.default_rng(5)
    for classes in (1, 2, 3, 7, 40, 300):
        probabilities = generator.dirichlet(np.full(classes, 0.3), size=200).astype(np.float32)
        stored = levels(probabilities).astype(int)
        assert (stored.sum(1) == 255).all()
        assert np.abs(stored - probabilities * 255).max() < 2 + 1e-3
        assert np.array_equal(stored.argmax(1), probabilities.argmax(1))
        assert ((stored == stored.max(1, keepdims=True)).sum(1) == 1).all()  # no tie at the top


def test_roc_auc_from_stored_levels_stays_within_a_fifth_of_a_point():
    """One-vs-rest ROC-AUC (scikit-learn's roc_auc_score) from the stored 8-bit probabilities
    against the float32 originals, on softmax outputs of random logits and noisy labels."""
    generator = np.random.default_rng(3)
    logits = generator.normal(scale=2.0, size=(750, 4))
    probabilities = (np.exp(logits) / np.exp(logits).sum(1, keepdims=True)).astype(np.float32)
    truth = np.where(
        generator.random(750) < 0.7, probabilities.argmax(1), generator.integers(0, 4, 750)
    )
    kept = decode(encode(NodePredictions(np.arange(750), probabilities, 750))).probabilities
    before = roc_auc_score(truth, probabilities, multi_class="ovr")
    after = roc_auc_score(truth, kept, multi_class="ovr")
    assert abs(before - after) < 0.002
