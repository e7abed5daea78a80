"""The real Dask cluster of the tests (tests/real_dask.py): a `dask scheduler` and `dask worker`
processes, each worker in its own working folder, that a suite runs on as on `local:N`."""

from __future__ import annotations

import os
import signal

import pytest

from harness.cli import main
from harness.planning import expand, load_suite
from harness.storage import store

pytestmark = pytest.mark.slow  # starts a scheduler and workers


def test_workers_run_in_their_folders_and_a_suite_runs_on_them(real_cluster, tiny_suite, tmp_path):
    from distributed import Client

    folders = [tmp_path / "north-depot", tmp_path / "south-depot"]
    cluster = real_cluster(2, folders=folders)
    with Client(cluster.address, timeout="10s") as client:
        assert sorted(client.run(os.getcwd).values()) == sorted(str(f) for f in folders)
        pids = client.run(os.getpid)
    assert sorted(pids.values()) == sorted(w.pid for w in cluster.workers)  # no nanny between
    store_file = tmp_path / "runs.db"
    arguments = ["run", str(tiny_suite), "--quiet", "--cluster", cluster.address, "--store"]
    assert main([*arguments, str(store_file)]) == 0, cluster.output()
    keys = sorted(spec.key for spec in expand(load_suite(tiny_suite)))
    assert sorted(store.load_runs(store_file)["key"]) == keys


def test_every_process_is_gone_after_the_cluster_stops(tmp_path):
    from tests.real_dask import start_real_cluster

    with start_real_cluster(1, tmp_path) as cluster:
        processes = [cluster.scheduler, *cluster.workers]
    for process in processes:
        assert process.poll() == -signal.SIGKILL
        with pytest.raises(ProcessLookupError):
            os.killpg(process.pid, 0)  # nothing of its group is left
