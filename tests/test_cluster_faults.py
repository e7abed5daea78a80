"""Faults of a real cluster (a `dask scheduler` and `dask worker` processes started by the test,
tests/real_dask.py): a scheduler killed mid-run or mid-tuning ends the command with one line
and exit status 3, keeping what finished; `--threads` is checked against each worker host's
cores; an address where no scheduler answers is one line within the stated wait."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from harness.planning import expand, load_suite
from tests.pausing import resume, stopped_in, wait_for
from tests.real_dask import RealCluster, kill_group
from tests.test_cluster import RUNS, alive_check, stored

pytestmark = pytest.mark.slow  # every test here starts a scheduler and workers


def submit(suite: Path, cluster: RealCluster, *options: str) -> subprocess.Popen:
    command = [sys.executable, "-m", "harness.cli", "run", str(suite), "--quiet"]
    command += ["--cluster", cluster.address, *options]
    return subprocess.Popen(
        command,
        env=cluster.environment,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )


def kill_scheduler_when(process: subprocess.Popen, cluster: RealCluster, reached, what: str) -> str:
    """Freeze the submitter and the workers in the state `reached()`, kill the scheduler,
    resume them; the submitter's exit status must be 3; its error output."""
    frozen = [process.pid, *(worker.pid for worker in cluster.workers)]
    try:
        wait_for(lambda: stopped_in(frozen, reached), alive_check(process), what)
        kill_group(cluster.scheduler)  # while nothing else moves
        resume(frozen)
        assert process.wait(timeout=120) == 3, cluster.output()
        return process.stderr.read()
    finally:
        resume(frozen)
        process.kill()


def stored_count(store_file: Path) -> int:
    """Stored runs; none while the (frozen) submitter holds a write, so that the state is
    tried again once it has moved on."""
    import sqlalchemy

    try:
        return len(stored(store_file))
    except sqlalchemy.exc.OperationalError as error:
        if "database is locked" not in str(error):
            raise
        return 0


def test_a_scheduler_killed_mid_run_is_one_line_and_exit_3_keeping_finished_runs(
    real_cluster, long_suite, tmp_path
):
    suite, store_file = long_suite(600), tmp_path / "runs.db"
    cluster = real_cluster(2)
    process = submit(suite, cluster, "--store", str(store_file))
    reached = lambda: 1 <= stored_count(store_file) < RUNS  # noqa: E731
    error = kill_scheduler_when(process, cluster, reached, "no run stored with runs left")
    runs = stored(store_file)
    lines = error.strip().splitlines()
    assert len(lines) == 1, error
    assert lines[0].startswith(
        f"heedful: error: --cluster {cluster.address}: the scheduler stopped answering mid-run"
    )
    said = f"{len(runs)} runs finished and are stored, {RUNS - len(runs)} not"
    assert said in lines[0], (said, lines[0])
    assert 1 <= len(runs) < RUNS and runs["key"].is_unique
    assert set(runs["key"]) <= {spec.key for spec in expand(load_suite(suite))}


TUNED_SUITE = """
name = "tuned_depots"
seeds = 2
metric = "accuracy"
[data]
source = "synthetic"
nodes = 80
graph_seed = 5
[training]
epochs = 150
patience = 150
[contenders.attention]
model = "gat"
hidden = 4
heads = 2
[contenders.features_only]
model = "mlp"
[tuning]
trials = 4
"""
TRIALS = 8  # 4 for each of the 2 contenders


def completed_trials(storage_url: str) -> int:
    """Finished tuning trials of every study in the tuning database (Optuna's own tables; the
    repeats study holds no trials of tuning)."""
    import sqlalchemy

    query = sqlalchemy.text(
        "SELECT count(*) FROM trials JOIN studies USING (study_id) "
        "WHERE state = 'COMPLETE' AND study_name NOT LIKE '%:repeats:%'"
    )
    engine = sqlalchemy.create_engine(storage_url, poolclass=sqlalchemy.pool.NullPool)
    try:
        with engine.connect() as connection:
            return connection.execute(query).scalar_one()
    except sqlalchemy.exc.ProgrammingError:  # Optuna has not made its tables yet
        return 0
    finally:
        engine.dispose()


def test_a_scheduler_killed_mid_tuning_is_one_line_and_exit_3(
    real_cluster, write_suite, postgres_store, tmp_path
):
    suite = write_suite(TUNED_SUITE, "tuned.toml")
    cluster = real_cluster(2)
    options = ["--store", str(tmp_path / "runs.db"), "--tuning-database", postgres_store]
    process = submit(suite, cluster, *options)
    # first a finished trial (polled while everything runs), then, frozen, trials still left
    wait_for(lambda: completed_trials(postgres_store) >= 1, alive_check(process), "no trial")
    reached = lambda: completed_trials(postgres_store) < TRIALS  # noqa: E731
    error = kill_scheduler_when(process, cluster, reached, "no trial left to run")
    assert error.strip() == (
        f"heedful: error: --cluster {cluster.address}: the scheduler stopped answering mid-run "
        "(connection lost); finished trials stay in the tuning database: start the scheduler "
        "and its workers again and run the same command to do only the rest"
    )
    assert completed_trials(postgres_store) >= 1


def test_threads_must_fit_each_worker_hosts_cores_before_anything_runs(
    real_cluster, tiny_suite, store_path, capsys
):
    """The workers run on this machine, with its cores (they inherit the test's affinity)."""
    from distributed import Client

    from harness.cli import main
    from harness.execution.cluster import Cluster
    from harness.execution.pool import available_cores
    from harness.execution.worker_cores import check_threads_on_workers

    cores, cluster = available_cores(), real_cluster(1)
    arguments = ["run", str(tiny_suite), "--cluster", cluster.address, "--store", str(store_path)]
    assert main([*arguments, "--threads", "1000"]) == 2
    assert capsys.readouterr().err.strip() == (
        f"heedful: error: --threads: 1000 threads x 1 worker threads on host 127.0.0.1 need "
        f"1000 cores, it has {cores}; allowed: --threads <= {cores} on this cluster"
    )
    assert not store_path.exists()  # refused before anything ran or was stored
    with Client(cluster.address, timeout="10s") as client:
        check_threads_on_workers(Cluster(client, cluster.address), cores)  # fits: no error


def test_a_scheduler_lost_between_two_executions_stops_the_next_at_once(
    real_cluster, tiny_suite, store_path
):
    """As between a suite's runs and its homophily map: Dask would wait without end on the
    futures of a client that lost its scheduler; the next execution is refused instead."""
    from harness.errors import ServiceOutage
    from harness.execution.cluster import connected
    from harness.execution.executors import ClusterExecutor

    cluster = real_cluster(1)
    specs = expand(load_suite(tiny_suite))
    with connected(cluster.address) as link:
        kill_group(cluster.scheduler)
        wait_for(lambda: link.client.status != "running", lambda: None, "the client kept it")
        with pytest.raises(ServiceOutage) as stopped:
            ClusterExecutor(link).execute(specs, store_path)
    assert str(stopped.value) == (
        f"--cluster {cluster.address}: the scheduler stopped answering mid-run (connection "
        "lost); stored runs are kept: start the scheduler and its workers again and run the "
        "same command to do only the rest"
    )
    assert not store_path.exists()


def test_a_local_cluster_says_nothing_when_another_holds_the_dashboard_port(recwarn):
    """Dask's scheduler serves HTTP on 8787 unless told otherwise, and warns when another
    cluster of the machine holds it: two `--cluster local:N` commands at once printed it."""
    import contextlib
    import socket

    from harness.execution.cluster import connected

    with contextlib.ExitStack() as held:
        with contextlib.suppress(OSError):  # held already: by another program, as wanted
            held.enter_context(socket.create_server(("127.0.0.1", 8787)))
        with connected("local:1") as cluster:
            assert cluster.client.run(lambda: 1)  # it runs tasks
    assert not [w for w in recwarn if "already in use" in str(w.message)]
