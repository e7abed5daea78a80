"""A real Dask cluster for tests: one `dask scheduler` process and N `dask worker` processes,
each worker in a working folder and environment of the test's choosing, as a user starts them.

Use the `real_cluster` fixture (tests/conftest.py makes it available everywhere)::

    @pytest.mark.slow
    def test_something(real_cluster, tmp_path):
        cluster = real_cluster(2, folders=[tmp_path / "a", tmp_path / "b"])
        main(["run", str(suite), "--cluster", cluster.address, ...])
        os.kill(cluster.scheduler.pid, signal.SIGKILL)  # or cluster.workers[0]

`start_real_cluster(...)` is the same as a context manager, for fixtures of a wider scope.
The scheduler listens on a free port of 127.0.0.1 (it picks it, and writes its address to a
scheduler file, so two tests never race for a port); workers run without a nanny (a killed
worker stays dead, and `cluster.workers[i].pid` is the worker itself), one thread each.
Workers import `harness` (and `tests`) from the tree under test: PYTHONPATH starts with it.
Start-up waits until the scheduler counts every worker, asking it (no fixed sleeps); every
process is started in a session of its own and its whole group is killed afterwards, even
when the test or the start-up fails. Each process's output goes to `<base>/<name>.log`.
"""

from __future__ import annotations

import itertools
import json
import os
import signal
import subprocess
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import ExitStack, contextmanager
from dataclasses import dataclass, field
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]  # the tree under test: harness/ and tests/
START_SECONDS = 90  # a busy 2-core machine imports distributed in each process in turn


@dataclass
class RealCluster:
    """A running scheduler and its workers; `address` is what `--cluster` is given."""

    address: str
    scheduler: subprocess.Popen
    workers: list[subprocess.Popen]
    folders: list[Path]  # each worker's working folder, in the order of `workers`
    logs: Path  # the folder of every process's output
    environment: dict[str, str] = field(repr=False)

    def output(self) -> str:
        """Every process's output so far (for assertion messages)."""
        return "\n".join(
            f"--- {log.name}\n{log.read_text(errors='replace')}"
            for log in sorted(self.logs.glob("*.log"))
        )


def environment_under_test(extra: dict[str, str] | None = None) -> dict[str, str]:
    """This process's environment with the tree under test first on PYTHONPATH."""
    environment = dict(os.environ)
    paths = [str(ROOT), *filter(None, environment.get("PYTHONPATH", "").split(os.pathsep))]
    environment["PYTHONPATH"] = os.pathsep.join(dict.fromkeys(paths))
    environment.update(extra or {})
    return environment


def _spawn(command: list[str], cwd: Path, log: Path, environment: dict[str, str]):
    with log.open("w") as output:  # the child keeps its own descriptor
        return subprocess.Popen(
            command,
            cwd=cwd,
            env=environment,
            stdin=subprocess.DEVNULL,
            stdout=output,
            stderr=subprocess.STDOUT,
            start_new_session=True,  # a group of its own: killed whole, never the test's group
        )


def kill_group(process: subprocess.Popen) -> None:
    """SIGKILL the process's whole group (its session), then reap it."""
    try:
        os.killpg(process.pid, signal.SIGKILL)
    except ProcessLookupError:  # already gone, group and all
        pass
    process.wait(timeout=30)


def _poll(reached: Callable[[], object], alive: Callable[[], None], what: str) -> object:
    deadline = time.monotonic() + START_SECONDS
    while not (answer := reached()):
        alive()
        if time.monotonic() > deadline:
            raise TimeoutError(f"{what} within {START_SECONDS} s")
        time.sleep(0.05)
    return answer


@contextmanager
def start_real_cluster(
    workers: int,
    base: Path,
    folders: list[Path] | None = None,
    environment: dict[str, str] | None = None,
) -> Iterator[RealCluster]:
    """A scheduler and `workers` workers, whose logs and scratch space live in `base`; worker
    i runs in folders[i] (created if missing; default base/worker-i). `environment` is added
    to every process's environment (such as DASK_DISTRIBUTED__SCHEDULER__... settings)."""
    from distributed import Client

    folders = folders or [base / f"worker-{n}" for n in range(workers)]
    assert len(folders) == workers, "one working folder per worker"
    for folder in folders:
        folder.mkdir(parents=True, exist_ok=True)
    base.mkdir(parents=True, exist_ok=True)
    settings = environment_under_test(environment)
    scheduler_file = base / "scheduler.json"
    with ExitStack() as cleanup:
        command = [sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1"]
        command += ["--port", "0", "--no-dashboard", "--dashboard-address", ":0"]
        command += ["--scheduler-file", str(scheduler_file)]  # its address, once it listens
        scheduler = _spawn(command, base, base / "scheduler.log", settings)
        cleanup.callback(kill_group, scheduler)
        processes = [scheduler]
        cluster = RealCluster("", scheduler, [], folders, base, settings)

        def alive() -> None:
            for process in processes:
                if process.poll() is not None:
                    raise RuntimeError(f"a process of the cluster ended:\n{cluster.output()}")

        written = lambda: scheduler_file.exists() and scheduler_file.read_text()  # noqa: E731
        cluster.address = json.loads(_poll(written, alive, "no scheduler file"))["address"]
        for n, folder in enumerate(folders):
            command = [sys.executable, "-m", "distributed.cli.dask_worker", cluster.address]
            command += ["--nworkers", "1", "--nthreads", "1", "--no-nanny", "--no-dashboard"]
            command += ["--host", "127.0.0.1", "--name", f"worker-{n}"]
            command += ["--local-directory", str(base / f"scratch-{n}")]
            worker = _spawn(command, folder, base / f"worker-{n}.log", settings)
            cleanup.callback(kill_group, worker)
            cluster.workers.append(worker)
            processes.append(worker)
        with Client(cluster.address, timeout="30s") as client:
            _poll(lambda: len(client.nthreads()) == workers, alive, f"not {workers} workers")
        yield cluster


@pytest.fixture
def real_cluster(tmp_path: Path) -> Iterator[Callable[..., RealCluster]]:
    """real_cluster(workers, folders=None, environment=None): a started RealCluster (see
    start_real_cluster), stopped after the test; its logs are in tmp_path/dask-N."""
    with ExitStack() as clusters:
        started = itertools.count()

        def start(
            workers: int,
            folders: list[Path] | None = None,
            environment: dict[str, str] | None = None,
        ) -> RealCluster:
            base = tmp_path / f"dask-{next(started)}"
            return clusters.enter_context(start_real_cluster(workers, base, folders, environment))

        yield start
