"""What keeps the result store small: measured figures kept to six significant digits (the
settings of a run kept exactly), and new SQLite files written in 2 KB pages."""

from __future__ import annotations

import sqlite3

from harness.storage import store
from harness.storage.database import PAGE_SIZE


def run_row(key: str) -> dict:
    names = {"suite": "couriers", "contender": "attention", "key": key, "model": "gat"}
    settings = {"options": {"learning_rate": 0.0012345678901}, "point": {"dropout": 0.123456789}}
    measured = {
        "curve": [0.20695614174479, 1 / 3, 12345.678901],
        "extras": {"attention": {"heads": [{"entropy_ratio": 0.94178721842457}], "edges": 13406}},
    }
    counts = {"seed": 0, "metric": "accuracy", "epochs": 3, "best_epoch": 2, "params": 9}
    figures = dict.fromkeys(("val_metric", "test_metric", "seconds", "peak_mb"), 0.5)
    return names | settings | measured | counts | figures | {"seconds_per_epoch": 0.1}


def test_measured_figures_keep_six_significant_digits_and_settings_stay_exact(any_store):
    assert store.save_run(any_store, run_row("k1"))
    stored = store.load_runs(any_store).iloc[0]
    assert stored["curve"] == [0.206956, 0.333333, 12345.7]
    assert stored["extras"] == {
        "attention": {"heads": [{"entropy_ratio": 0.941787}], "edges": 13406}
    }
    assert stored["options"] == {"learning_rate": 0.0012345678901}
    assert stored["point"] == {"dropout": 0.123456789}


def test_a_new_sqlite_store_uses_two_kilobyte_pages(tmp_path):
    path = tmp_path / "runs.db"
    assert store.save_run(path, run_row("k1"))
    with sqlite3.connect(path) as connection:
        assert connection.execute("PRAGMA page_size").fetchone()[0] == PAGE_SIZE == 2048


def test_an_existing_sqlite_store_keeps_its_page_size(tmp_path):
    path = tmp_path / "runs.db"
    with sqlite3.connect(path) as connection:
        connection.execute("PRAGMA page_size=4096")
        # a store an older version made: one of Heedful's tables, in SQLite's default pages
        connection.execute("CREATE TABLE predictions (key TEXT PRIMARY KEY, encoded BLOB)")
    assert store.save_run(path, run_row("k1"))
    with sqlite3.connect(path) as connection:
        assert connection.execute("PRAGMA page_size").fetchone()[0] == 4096
        assert connection.execute("SELECT COUNT(*) FROM runs").fetchone()[0] == 1
