"""Result store: one row per (suite, contender, key), committed at once, never stored twice."""

from __future__ import annotations

import math
import sqlite3

import pytest

from harness.errors import InputError
from harness.storage import store


def record(key: str, seed: int = 0, contender: str = "convolution", **changes) -> dict:
    values = {
        "suite": "couriers",
        "contender": contender,
        "key": key,
        "model": "gcn",
        "options": {"model": "gcn", "hidden": 8},
        "point": {},
        "seed": seed,
        "metric": "accuracy",
        "val_metric": 0.75,
        "test_metric": 0.5,
        "test_accuracy": 0.5,
        "test_macro_f1": 0.4,
        "test_roc_auc": float("nan"),
        "epochs": 12,
        "best_epoch": 7,
        "seconds": 0.25,
        "seconds_per_epoch": 0.02,
        "params": 99,
        "peak_mb": 0.1,
        "curve": [0.5, 0.75],
        "extras": {"note": "x"},
    }
    return values | changes


def test_save_then_load_round_trip(store_path):
    assert store.save_run(store_path, record("k1"))
    runs = store.load_runs(store_path)
    assert len(runs) == 1
    row = runs.iloc[0]
    assert row["options"] == {"model": "gcn", "hidden": 8}
    assert row["curve"] == [0.5, 0.75] and row["extras"] == {"note": "x"} and row["point"] == {}
    assert row["params"] == 99 and row["val_metric"] == 0.75
    assert math.isnan(row["test_roc_auc"])  # NaN is stored as NULL and read back as NaN
    assert row["version"]  # the package version is recorded


def test_a_run_is_never_stored_twice(store_path):
    assert store.save_run(store_path, record("k1"))
    assert not store.save_run(store_path, record("k1", test_metric=0.9))
    runs = store.load_runs(store_path)
    assert len(runs) == 1 and runs.iloc[0]["test_metric"] == 0.5  # the first row is kept
    # the same key under another contender name is another row (names are labels only)
    assert store.save_run(store_path, record("k1", contender="renamed"))
    assert store.finished_keys(store_path, "couriers") == {("convolution", "k1"), ("renamed", "k1")}


def test_load_filters_by_suite_in_finishing_order(store_path):
    for index in range(3):
        store.save_run(store_path, record(f"k{index}", seed=index))
    store.save_run(store_path, record("other", suite="depots"))
    assert store.load_runs(store_path, ["couriers"])["seed"].tolist() == [0, 1, 2]
    assert store.load_runs(store_path, ["depots"])["key"].tolist() == ["other"]
    assert len(store.load_runs(store_path)) == 4
    assert store.finished_keys(store_path, "nobody") == set()


def test_store_file_is_sqlite_in_wal_mode(store_path):
    store.save_run(store_path, record("k1"))
    with sqlite3.connect(store_path) as connection:
        assert connection.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert connection.execute("SELECT count(*) FROM runs").fetchone()[0] == 1


def test_bad_store_paths_are_input_errors(tmp_path):
    with pytest.raises(InputError, match="result store not found"):
        store.load_runs(tmp_path / "absent.db")
    with pytest.raises(InputError, match="result store path is a directory"):
        store.finished_keys(tmp_path, "couriers")
    text = tmp_path / "notes.db"
    text.write_text("these are not the runs you are looking for\n" * 20)
    with pytest.raises(InputError, match=r"notes.db: not a Heedful result store"):
        store.finished_keys(text, "couriers")
    assert text.read_text().startswith("these are not")  # left as it was
