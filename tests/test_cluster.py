"""Execution on a Dask cluster (`--cluster local:N`): every run stored once by the submitting
process with the figures of `--jobs 1`; a killed worker's run is given to another worker;
Ctrl-C keeps what finished; an unreachable scheduler or a mismatched worker stops everything
before anything is stored."""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
from collections.abc import Callable
from pathlib import Path

import pandas as pd
import psutil
import pytest

import harness.execution.pool
from harness.cli import main
from harness.execution import cluster
from harness.execution.local import execute
from harness.planning import expand, load_suite
from harness.storage import store
from tests.pausing import resume, stopped_in, wait_for
from tests.test_link_suites import LINK_SUITE

pytestmark = pytest.mark.slow  # every test here starts a cluster or a command
ROOT = Path(__file__).resolve().parents[1]
FIGURES = ["val_metric", "test_metric", "test_accuracy", "epochs", "best_epoch", "curve"]


RUNS = 6  # the tiny suite's 3 contenders x 2 seeds


def stored(store_file: Path) -> pd.DataFrame:
    """The stored runs (read-only), or none while the store is still empty."""
    if not store_file.exists():
        return pd.DataFrame(columns=["key"])
    return store.load_runs(store_file)


def stored_count(store_file: Path) -> int | None:
    """Runs stored so far, read-only; None while that cannot be known: no store yet, or one
    locked by a process stopped in the middle of writing it."""
    try:
        connection = sqlite3.connect(f"file:{store_file}?mode=ro", uri=True, timeout=1)
    except sqlite3.OperationalError:
        return None
    try:
        return connection.execute("SELECT count(*) FROM runs").fetchone()[0]
    except sqlite3.OperationalError:  # locked, or its table not made yet
        return None
    finally:
        connection.close()


def start(suite: Path, store_file: Path) -> subprocess.Popen:
    command = [sys.executable, "-m", "harness.cli", "run", str(suite), "--quiet"]
    command += ["--cluster", "local:2", "--store", str(store_file)]
    # Ctrl-C as in a terminal: a process started with SIGINT ignored (as its parent may have
    # it) keeps it ignored, which is the shell's way of running background jobs
    return subprocess.Popen(
        command,
        cwd=ROOT,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL),
    )


def test_cluster_stores_every_run_once_with_the_figures_of_one_job(finished_store, tmp_path):
    suite, one_job_store = finished_store
    cluster_store = tmp_path / "cluster.db"
    assert main(["run", str(suite), "--cluster", "local:2", "--store", str(cluster_store)]) == 0
    specs = expand(load_suite(suite))
    on_cluster = store.load_runs(cluster_store).set_index("key").sort_index()
    one_job = store.load_runs(one_job_store).set_index("key").sort_index()
    assert sorted(on_cluster.index) == sorted(s.key for s in specs)  # each run exactly once
    pd.testing.assert_frame_equal(on_cluster[FIGURES], one_job[FIGURES])  # bit for bit


def dask_workers(process: subprocess.Popen) -> list[int]:
    """The submitter's Dask worker processes: its children that listen on a TCP port (the
    others, such as multiprocessing's resource tracker, do not)."""
    found = []
    for child in psutil.Process(process.pid).children():
        try:
            listening = [c for c in child.net_connections("tcp") if c.status == psutil.CONN_LISTEN]
        except psutil.NoSuchProcess:
            continue
        if listening:
            found.append(child.pid)
    return found


def frozen_with_runs_left(process: subprocess.Popen, store_file: Path, frozen: list[int]) -> bool:
    """Stop the submitter and its workers; True (they stay stopped) when two workers are up,
    a run is stored and runs are left, else they are resumed."""
    frozen[:] = [process.pid, *dask_workers(process)]

    def reached() -> bool:
        count = stored_count(store_file)
        return len(frozen) == 3 and count is not None and 1 <= count < RUNS

    return stopped_in(frozen, reached)


def alive_check(process: subprocess.Popen) -> Callable[[], None]:
    def alive() -> None:
        assert process.poll() is None, process.stderr.read()

    return alive


def test_a_worker_killed_mid_run_leaves_the_suite_complete(long_suite, tmp_path):
    suite, store_file = long_suite(600), tmp_path / "killed.db"
    process = start(suite, store_file)
    frozen: list[int] = []
    try:
        reached = lambda: frozen_with_runs_left(process, store_file, frozen)  # noqa: E731
        wait_for(reached, alive_check(process), "no worker ran with runs left")
        os.kill(frozen[1], signal.SIGKILL)  # a worker, while nothing moves
        resume(frozen)
        assert process.wait(timeout=240) == 0, process.stderr.read()
    finally:
        resume(frozen)
        process.kill()
    runs = stored(store_file)
    assert sorted(runs["key"]) == sorted(s.key for s in expand(load_suite(suite)))


def test_ctrl_c_cancels_the_rest_and_keeps_finished_runs(long_suite, tmp_path):
    suite, store_file = long_suite(1500), tmp_path / "interrupted.db"
    process = start(suite, store_file)
    frozen: list[int] = []
    try:
        reached = lambda: frozen_with_runs_left(process, store_file, frozen)  # noqa: E731
        wait_for(reached, alive_check(process), "no run was stored with runs left")
        process.send_signal(signal.SIGINT)  # to the submitting process only, while stopped
        resume(frozen)  # the submitter first: it meets the interrupt before anything else
        assert process.wait(timeout=120) == 130
        message = process.stderr.read()
    finally:
        resume(frozen)
        process.kill()
    runs = stored(store_file)
    assert 1 <= len(runs) < RUNS and runs["key"].is_unique
    said = " ".join(message.split())  # rich wraps long lines
    assert f"interrupted: {len(runs)} runs finished and stored in {store_file}" in said


def test_an_unreachable_scheduler_is_one_line_before_anything_is_stored(
    tiny_suite, store_path, capsys
):
    arguments = ["run", str(tiny_suite), "--cluster", "tcp://127.0.0.1:1", "--store"]
    assert main([*arguments, str(store_path)]) == 2
    error = capsys.readouterr().err
    assert error.startswith("heedful: error: --cluster tcp://127.0.0.1:1: no Dask scheduler")
    assert len(error.strip().splitlines()) == 1
    assert not store_path.exists()  # not even the data profile


def test_workers_with_other_versions_are_refused_naming_the_difference(
    tiny_suite, store_path, monkeypatch, capsys
):
    ours = cluster.fingerprint()
    monkeypatch.setattr(cluster, "local_fingerprint", lambda: ours | {"torch": "0.0-submitter"})
    arguments = ["run", str(tiny_suite), "--cluster", "local:1", "--store", str(store_path)]
    assert main(arguments) == 2
    error = capsys.readouterr().err
    assert f"has torch {ours['torch']}, this machine 0.0-submitter" in error
    assert len(error.strip().splitlines()) == 1 and not store_path.exists()


def test_the_source_hash_changes_with_any_line_of_the_package(tmp_path, monkeypatch):
    """Not only the version string: one changed comment deep in the package changes it."""
    import shutil

    import harness

    copy = tmp_path / "harness"
    shutil.copytree(Path(harness.__file__).parent, copy)
    monkeypatch.setattr(harness, "__file__", str(copy / "__init__.py"))
    cluster.source_hash.cache_clear()
    try:
        before = cluster.source_hash()
        with (copy / "training" / "fit.py").open("a") as module:
            module.write("# one more line\n")
        cluster.source_hash.cache_clear()
        assert cluster.source_hash() != before
    finally:
        cluster.source_hash.cache_clear()


def test_cluster_arguments_are_checked_in_one_line(tiny_suite, capsys):
    for given in ("local:0", "local:two", "nowhere"):
        with pytest.raises(SystemExit) as exit_status:
            main(["run", str(tiny_suite), "--cluster", given])
        assert exit_status.value.code == 2
        assert f"given '{given}'" in capsys.readouterr().err
    assert main(["run", str(tiny_suite), "--cluster", "local:1", "--jobs", "2"]) == 2
    assert "--cluster and --jobs: given both" in capsys.readouterr().err


def test_a_tuned_suite_on_a_cluster_stores_every_repeat_once(write_suite, tmp_path, capsys):
    """Each cluster worker runs a tuning worker on the shared storage; the submitter stores."""
    suite = write_suite(
        """
        name = "tuned_depots"
        seeds = 2
        metric = "accuracy"
        [data]
        source = "synthetic"
        nodes = 80
        graph_seed = 5
        [training]
        epochs = 8
        [contenders.attention]
        model = "gat"
        hidden = 4
        heads = 2
        [contenders.features_only]
        model = "mlp"
        [tuning]
        trials = 2
        heartbeat_seconds = 1
        """,
        "tuned.toml",
    )
    store_file = tmp_path / "tuned.db"
    arguments = ["run", str(suite), "--cluster", "local:2", "--quiet", "--store", str(store_file)]
    assert main(arguments) == 0
    runs = store.load_runs(store_file)
    pairs = sorted(zip(runs["contender"], runs["seed"], strict=True))
    assert pairs == [("attention", 0), ("attention", 1), ("features_only", 0), ("features_only", 1)]
    assert all("tuned" in extras for extras in runs["extras"])
    # a storage in a file of this machine cannot be shared with workers elsewhere
    assert main([*arguments[:3], "tcp://127.0.0.1:1", "--store", str(store_file)]) == 2
    assert "-tuning.db is a file on this machine" in capsys.readouterr().err


def test_cluster_threads_must_fit_the_cores_before_the_cluster_starts(
    tiny_suite, store_path, monkeypatch, capsys
):
    """local:N starts N worker processes on this machine: N x threads must fit its cores, as
    --jobs x --threads must; refused in one line before any process starts."""
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 2)
    monkeypatch.setattr(cluster, "connected", lambda address: pytest.fail("cluster started"))
    arguments = ["run", str(tiny_suite), "--store", str(store_path), "--cluster"]
    assert main([*arguments, "local:2", "--threads", "2"]) == 2
    assert capsys.readouterr().err.strip() == (
        "heedful: error: --threads: 2 workers x 2 threads need 4 cores, 2 are usable; "
        "allowed: workers x threads <= 2"
    )
    assert main([*arguments, "local:3"]) == 2
    assert capsys.readouterr().err.strip() == (
        "heedful: error: --cluster local:3: 3 workers need 3 cores, 2 are usable; "
        "allowed: workers <= 2"
    )
    assert not store_path.exists()


def failing_on_workers(doomed: str, how: str) -> Callable:
    """train_on_worker, except that the doomed run raises, or kills the worker running it.
    Defined here, it travels to the workers by value (cloudpickle), monkeypatch and all."""
    real = cluster.train_on_worker

    def train(spec, *given):
        if spec.key == doomed and how == "raise":
            raise RuntimeError("the depot ledger is unreadable")
        if spec.key == doomed:
            os.kill(os.getpid(), signal.SIGKILL)
        return real(spec, *given)

    return train


def test_a_run_that_raises_on_a_worker_is_one_line_and_nothing_stored_is_lost(
    tiny_suite, store_path, monkeypatch, capsys
):
    specs = expand(load_suite(tiny_suite))
    execute(specs[:2], store_path)  # stored before: must stay as they are
    before = store.load_runs(store_path).set_index("key")
    doomed = specs[3]
    monkeypatch.setattr(cluster, "train_on_worker", failing_on_workers(doomed.key, "raise"))
    arguments = ["run", str(tiny_suite), "--cluster", "local:2", "--quiet", "--store"]
    assert main([*arguments, str(store_path)]) == 3  # as on local processes
    error = capsys.readouterr().err
    assert error.strip() == (
        f"heedful: error: run tiny_couriers/{doomed.label} seed {doomed.seed} (key "
        f"{doomed.key}) failed: RuntimeError: the depot ledger is unreadable"
    )
    after = store.load_runs(store_path).set_index("key")
    pd.testing.assert_frame_equal(after.loc[before.index], before)
    assert sorted(after.index) == sorted(s.key for s in specs if s is not doomed)


def test_a_run_whose_worker_dies_past_the_retry_bound_is_reported_and_the_rest_stored(
    tiny_suite, store_path, monkeypatch, capsys
):
    """Dask gives a dead worker's run to another worker until it has killed RESUBMISSIONS + 1
    workers (its `allowed-failures`); lowered to 1 here so that two deaths are enough."""
    monkeypatch.setattr(cluster, "RESUBMISSIONS", 1)
    specs = expand(load_suite(tiny_suite))
    doomed = specs[0]
    monkeypatch.setattr(cluster, "train_on_worker", failing_on_workers(doomed.key, "kill"))
    arguments = ["run", str(tiny_suite), "--cluster", "local:2", "--quiet", "--store"]
    assert main([*arguments, str(store_path)]) == 3
    error = " ".join(capsys.readouterr().err.split())
    assert error == (
        f"heedful: error: run tiny_couriers/{doomed.label} seed {doomed.seed} (key "
        f"{doomed.key}): its worker died 2 times (out of memory, or killed); everything else "
        "is stored"
    )
    runs = store.load_runs(store_path)
    assert sorted(runs["key"]) == sorted(s.key for s in specs if s is not doomed)


@pytest.fixture(scope="module")
def link_stores(tmp_path_factory) -> tuple[Path, Path, Path]:
    """A link prediction suite (fictional docking stations and regular trips between them)
    run in one process and on a local cluster: (suite, one-process store, cluster store)."""
    folder = tmp_path_factory.mktemp("links")
    suite = folder / "links.toml"
    suite.write_text(LINK_SUITE, encoding="utf-8")
    arguments = ["run", str(suite), "--quiet", "--store"]
    assert main([*arguments, str(folder / "one.db")]) == 0
    assert main([*arguments, str(folder / "cluster.db"), "--cluster", "local:2"]) == 0
    return suite, folder / "one.db", folder / "cluster.db"


def by_key(store_file: Path) -> pd.DataFrame:
    return store.load_runs(store_file).set_index("key").sort_index()


def test_a_link_prediction_suite_on_a_cluster_stores_each_run_once(link_stores):
    suite, one_process, on_cluster = link_stores
    keys = sorted(s.key for s in expand(load_suite(suite)))
    assert list(by_key(on_cluster).index) == list(by_key(one_process).index) == keys


def test_a_link_prediction_suite_on_a_cluster_gives_the_figures_of_one_process(link_stores):
    """Bit for bit: PyG's negatives come from a generator of the training thread, not from
    Python's shared one, which a Dask worker's own threads draw from while a run trains."""
    _, one_process, on_cluster = link_stores
    figures = ["val_metric", "test_metric", "test_average_precision", "test_roc_auc", "curve"]
    pd.testing.assert_frame_equal(by_key(on_cluster)[figures], by_key(one_process)[figures])
