"""A graph classification suite on a local Dask cluster (`--cluster local:2`): every planned
run stored once, under the keys and with the figures of `--jobs 1`."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from harness.cli import main
from harness.planning import expand, load_suite
from harness.storage import store
from tests.test_graph_suites import BOARD_SUITE

pytestmark = pytest.mark.slow

FIGURES = ["val_metric", "test_metric", "test_macro_f1", "test_roc_auc", "epochs", "curve"]


def by_key(store_file: Path) -> pd.DataFrame:
    return store.load_runs(store_file).set_index("key").sort_index()


def test_a_graph_suite_on_a_cluster_stores_the_keys_and_figures_of_one_job(tmp_path):
    suite = tmp_path / "boards.toml"
    suite.write_text(BOARD_SUITE.replace("epochs = 15", "epochs = 4"), encoding="utf-8")
    arguments = ["run", str(suite), "--quiet", "--store"]
    assert main([*arguments, str(tmp_path / "one.db"), "--jobs", "1"]) == 0
    assert main([*arguments, str(tmp_path / "cluster.db"), "--cluster", "local:2"]) == 0
    keys = sorted(spec.key for spec in expand(load_suite(suite)))
    one_job, on_cluster = by_key(tmp_path / "one.db"), by_key(tmp_path / "cluster.db")
    assert list(on_cluster.index) == list(one_job.index) == keys  # each run exactly once
    pd.testing.assert_frame_equal(on_cluster[FIGURES], one_job[FIGURES])
