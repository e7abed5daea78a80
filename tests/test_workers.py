"""Several `heedful run` worker processes on one Optuna storage share a tuned suite.

Checked: each contender's study ends with exactly the budgeted finished trials, every seeded
repeat is stored once, and a worker killed with SIGKILL mid-study loses nothing that finished.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
import uuid
from collections import Counter
from pathlib import Path

import optuna
import pytest
from optuna.trial import TrialState

from harness.planning import load_suite
from harness.storage import store
from harness.tuning.storage import open_storage
from harness.tuning.study import repeats_study_name, tuning_plan
from harness.tuning.workers import usage
from tests.pausing import stopped_in, wait_for

pytestmark = pytest.mark.slow

TRIALS = 10
SUITE = """
name = "{name}"
seeds = 2
metric = "accuracy"
[data]
source = "synthetic"
nodes = 80
classes = 3
average_degree = 5
edge_homophily = 0.8
feature_dimension = 6
graph_seed = 5
[training]
epochs = {epochs}
patience = {epochs}
[contenders.attention]
model = "gat"
heads = 2
hidden = 4
[contenders.features_only]
model = "mlp"
hidden = 12
[tuning]
trials = {trials}
heartbeat_seconds = 1
"""


def write_suite(folder: Path, name: str, epochs: int = 6) -> Path:
    path = folder / f"{name}.toml"
    path.write_text(SUITE.format(name=name, trials=TRIALS, epochs=epochs))
    return path


def start_worker(suite: Path, store_path: Path, url: str, core: int) -> subprocess.Popen:
    """One `heedful run` process pinned to one core (so it uses one torch thread)."""
    cores = sorted(os.sched_getaffinity(0))
    log = open(store_path.with_suffix(f".{core}.{time.monotonic_ns()}.log"), "w")  # noqa: SIM115
    worker = subprocess.Popen(
        [sys.executable, "-m", "harness.cli", "run", str(suite), "--quiet"]
        + ["--store", str(store_path), "--tuning-database", url],
        stdout=log,
        stderr=subprocess.STDOUT,
        preexec_fn=lambda: os.sched_setaffinity(0, {cores[core % len(cores)]}),
    )
    worker.log_path = Path(log.name)  # Popen keeps no file object when given one
    return worker


def finish(worker: subprocess.Popen, timeout: float = 240) -> None:
    assert worker.wait(timeout) == 0, worker.log_path.read_text()[-3000:]


def check_complete(suite_path: Path, url: str, stores: list[Path]) -> list[optuna.Study]:
    """Exactly the budget in every study; each repeat completed once and stored once."""
    suite = load_suite(suite_path)
    storage = open_storage(url, 1, 3)
    plans = tuning_plan(suite)
    studies = [optuna.load_study(study_name=p.study, storage=storage) for p in plans]
    assert [usage(s).finished for s in studies] == [TRIALS] * len(plans)
    repeats = optuna.load_study(study_name=repeats_study_name(suite, plans), storage=storage)
    completed = repeats.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    pairs = Counter((t.user_attrs["contender"], t.user_attrs["seed"]) for t in completed)
    wanted = {(p.contender, seed) for p in plans for seed in suite.seed_list}
    assert set(pairs) == wanted and set(pairs.values()) == {1}
    for store_path in stores:
        runs = store.load_runs(store_path, [suite.name])
        assert Counter(zip(runs["contender"], runs["seed"], strict=True)) == Counter(wanted)
    return studies


def test_two_workers_on_postgresql_each_with_its_own_result_store(tmp_path, postgres_url):
    url = postgres_url
    suite_path = write_suite(tmp_path, f"shared-{uuid.uuid4().hex[:8]}")
    stores = [tmp_path / "machine-a.db", tmp_path / "machine-b.db"]
    workers = [start_worker(suite_path, stores[core], url, core) for core in (0, 1)]
    try:
        for worker in workers:
            finish(worker)
        check_complete(suite_path, url, stores)
    finally:
        storage = open_storage(url, 1, 3)
        for summary in optuna.get_all_study_summaries(storage):
            if summary.study_name.startswith(load_suite(suite_path).name + ":"):
                optuna.delete_study(study_name=summary.study_name, storage=storage)


def test_two_workers_on_sqlite_one_killed_mid_trial_and_restarted(tmp_path):
    """Worker A is killed with SIGKILL while it runs a trial, then started again; together
    with worker B the study completes with no finished trial lost or counted twice.

    Worker A is stopped (SIGSTOP) first and killed only if, while stopped, it still runs a
    trial and two others have finished; otherwise it is resumed and looked at again."""
    suite_path = write_suite(tmp_path, "killed", epochs=100)
    with suite_path.open("a") as suite_file:
        suite_file.write('pruner = "none"\n')  # appended to the [tuning] table
    url = f"sqlite:///{tmp_path / 'tuning.db'}"
    store_path = tmp_path / "runs.db"
    first = tuning_plan(load_suite(suite_path))[0]
    storage = open_storage(url, 1, 3)  # its tables made before the workers open it
    doomed = start_worker(suite_path, store_path, url, 0)
    partner = start_worker(suite_path, store_path, url, 1)

    def first_study() -> optuna.Study | None:
        try:
            return optuna.load_study(study_name=first.study, storage=storage)
        except KeyError:  # not created yet
            return None

    def mid_trial() -> bool:
        trials = first_study().get_trials(deepcopy=False)
        mine = [t for t in trials if t.user_attrs.get("worker", "").endswith(f":{doomed.pid}")]
        finished = [t for t in trials if t.state in (TrialState.COMPLETE, TrialState.PRUNED)]
        return len(finished) >= 2 and any(t.state == TrialState.RUNNING for t in mine)

    def alive() -> None:
        assert doomed.poll() is None, "worker A ended before it could be killed"

    reached = lambda: first_study() is not None and stopped_in([doomed.pid], mid_trial)  # noqa: E731
    wait_for(reached, alive, "worker A never ran a trial after two had finished")
    doomed.send_signal(signal.SIGKILL)
    assert doomed.wait(30) == -signal.SIGKILL
    study = first_study()
    finished_before = {
        t.number: (t.state, t.value)
        for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE, TrialState.PRUNED))
    }
    restarted = start_worker(suite_path, store_path, url, 0)
    finish(partner)
    finish(restarted)
    studies = check_complete(suite_path, url, [store_path])
    after = {t.number: (t.state, t.value) for t in studies[0].trials}
    assert all(after[number] == kept for number, kept in finished_before.items())
    failed = studies[0].get_trials(states=(TrialState.FAIL,))
    killed = [t for t in failed if t.user_attrs.get("worker", "").endswith(f":{doomed.pid}")]
    assert len(killed) == 1  # the killed trial: marked failed, not counted
    retried = [t for t in studies[0].trials if "failed_trial" in t.system_attrs]
    assert [t.system_attrs["failed_trial"] for t in retried] == [killed[0].number]
