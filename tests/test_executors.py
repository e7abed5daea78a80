"""The executor registry's contract, run over every executor: on the same tiny suite each stores
the runs one process stores (same keys, same figures for the same seed) and reuses them on a
second call; a run that raises is one line naming it while the others are stored; bad input
found by a run stops the execution naming the run and keeps what is stored; tuning workers run
one copy per worker on the threads asked for. The cluster executor runs on a local Dask
cluster of two worker processes."""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator
from contextlib import ExitStack
from pathlib import Path

import pandas as pd
import pytest
import torch

import harness.execution.pool
from harness.errors import InputError
from harness.execution.executors import EXECUTORS, ClusterLink, Executor, Resources
from harness.planning import expand, load_suite, parse_suite
from harness.storage import store

FIGURES = ["val_metric", "test_metric", "test_accuracy", "epochs", "best_epoch", "curve"]
CONTRACT = ("cluster", "local")  # every executor the contract below has resources for


@pytest.fixture(scope="module")
def dask_cluster() -> Iterator[object]:
    from harness.execution.cluster import connected

    with connected("local:2") as cluster:
        yield cluster


def resources(name: str, request: pytest.FixtureRequest) -> Resources:
    """What the contract gives an executor: two processes (the cluster's: its two workers)."""
    if name == "cluster":
        link = ClusterLink("local:2", ExitStack(), request.getfixturevalue("dask_cluster"))
        return Resources(cluster=link)
    return Resources(jobs=2)


# a cluster starts processes of its own: slow, like tests/test_cluster.py
EXECUTOR_NAMES = [
    pytest.param(name, marks=pytest.mark.slow) if name == "cluster" else name
    for name in sorted(EXECUTORS)
]


@pytest.fixture(params=EXECUTOR_NAMES)
def name(request: pytest.FixtureRequest, monkeypatch: pytest.MonkeyPatch) -> str:
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 2)
    return request.param


@pytest.fixture
def executor(name: str, request: pytest.FixtureRequest) -> Executor:
    return EXECUTORS[name].set_up(resources(name, request))


def test_every_executor_is_under_the_contract() -> None:
    assert tuple(sorted(EXECUTORS)) == CONTRACT


def stored_by_key(store_file: Path) -> pd.DataFrame:
    return store.load_runs(store_file).set_index("key").sort_index()


def test_stores_the_runs_of_one_process_and_reuses_them(executor, finished_store, tmp_path):
    suite, one_process = finished_store
    specs = expand(load_suite(suite))
    store_file = tmp_path / "runs.db"
    first = executor.execute(specs, store_file)
    assert (first.planned, first.skipped, first.finished) == (len(specs), 0, len(specs))
    assert (first.interrupted, first.failures) == (False, ())
    runs = stored_by_key(store_file)
    assert list(runs.index) == sorted(spec.key for spec in specs)  # each run exactly once
    pd.testing.assert_frame_equal(runs[FIGURES], stored_by_key(one_process)[FIGURES])

    finished: list[str] = []
    second = executor.execute(specs, store_file, finished.append)
    assert (second.skipped, second.finished, finished) == (len(specs), 0, [])
    pd.testing.assert_frame_equal(stored_by_key(store_file), runs)  # finishing times too


def test_a_run_that_raises_is_one_line_naming_it_and_the_others_are_stored(
    executor, tiny_suite, tmp_path
):
    specs = expand(load_suite(tiny_suite))[:3]
    options = specs[1].options.model_copy(update={"dropout": 2.0})  # unvalidated: torch refuses
    broken = dataclasses.replace(specs[1], options=options)
    store_file = tmp_path / "runs.db"
    outcome = executor.execute([specs[0], broken, specs[2]], store_file)
    assert outcome.failures == (
        f"run tiny_couriers/{broken.label} seed {broken.seed} (key {broken.key}) failed: "
        "ValueError: dropout probability has to be between 0 and 1, but got 2.0",
    )
    assert (outcome.finished, outcome.interrupted) == (2, False)
    assert list(stored_by_key(store_file).index) == sorted([specs[0].key, specs[2].key])


def test_bad_input_found_by_a_run_stops_it_naming_the_run_and_keeps_what_is_stored(
    executor, tiny_suite, tmp_path
):
    specs = expand(load_suite(tiny_suite))
    store_file = tmp_path / "runs.db"
    executor.execute(specs[:2], store_file)
    kept = stored_by_key(store_file)
    (tmp_path / "nodes.csv").write_text("id,label,f1\na,0,1.0\nb,1,0.0\n", encoding="utf-8")
    (tmp_path / "edges.csv").write_text("source,target\na,b\n", encoding="utf-8")
    raw = {
        "name": "tiny_couriers",
        "data": {"source": "tables", "nodes": "nodes.csv", "edges": "edges.csv"},
        "contenders": {"plain": {"model": "mlp"}},
    }
    tables = parse_suite(raw, str(tmp_path / "suite.toml")).data
    (tmp_path / "nodes.csv").write_text("", encoding="utf-8")  # emptied after the check
    bad = dataclasses.replace(specs[2], data=tables)
    with pytest.raises(InputError) as raised:
        executor.execute([bad, *specs[3:5]], store_file)
    message = str(raised.value)
    assert message.startswith(f"run tiny_couriers/{bad.label} seed {bad.seed} (key {bad.key}): ")
    assert message.endswith(
        "nodes.csv: the file is empty; allowed: a header row and one row per node"
    )
    after = stored_by_key(store_file)
    pd.testing.assert_frame_equal(after.loc[kept.index], kept)  # nothing stored is lost
    assert bad.key not in after.index


@pytest.mark.slow  # spawned copies
def test_runs_one_copy_of_a_task_per_worker_on_the_threads_asked_for(name, request, monkeypatch):
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 4)  # 2 x 2 threads
    given = dataclasses.replace(resources(name, request), threads=2)
    on_two_threads = EXECUTORS[name].set_up(given)
    assert on_two_threads.run_copies(torch.get_num_threads, ()) == [2, 2]
