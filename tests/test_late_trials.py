"""A trial whose worker pauses past the heartbeat grace period is marked failed by the other
worker and retried; when its worker resumes, the late trial is dropped and the tuned suite
still finishes with exactly its budget (`heedful run --jobs 2`, SIGSTOP then SIGCONT).

Deterministic: the test waits until a worker runs a trial, stops that worker, checks (while it
is stopped) that the trial still runs and that the worker holds no write lock on the storage,
waits until the other worker has marked the trial failed, and only then resumes it.
"""

from __future__ import annotations

import sqlite3
import subprocess
import sys
from collections import Counter
from functools import partial
from pathlib import Path

import optuna
import pytest
from optuna.trial import FrozenTrial, TrialState

from harness.planning import load_suite
from harness.storage import store
from harness.tuning.storage import open_storage
from harness.tuning.study import repeats_study_name, tuning_plan
from harness.tuning.trial_states import usage
from tests.pausing import resume, stopped_in, wait_for
from tests.test_workers import SUITE as WORKERS_SUITE

pytestmark = pytest.mark.slow

TRIALS = 4


def suite_text(phase: str) -> str:
    """Trials long enough to be caught running, never pruned, so that each runs its epochs."""
    text = WORKERS_SUITE.format(name=f"late_{phase}", epochs=150, trials=TRIALS)
    return text + 'pruner = "none"\n'  # appended to the [tuning] table


def running_trials(storage: optuna.storages.BaseStorage, names: list[str]) -> list[FrozenTrial]:
    """Running trials of the named studies that say which process runs them."""
    found = []
    for name in names:
        try:
            study = optuna.load_study(study_name=name, storage=storage)
        except KeyError:  # not created yet
            continue
        trials = study.get_trials(deepcopy=False, states=(TrialState.RUNNING,))
        found += [t for t in trials if "worker" in t.user_attrs]
    return found


def holds_no_write_lock(database: Path) -> bool:
    """True when a write transaction can start now: no (stopped) process holds the lock."""
    connection = sqlite3.connect(database, timeout=0.1, isolation_level=None)
    try:
        connection.execute("BEGIN IMMEDIATE")
        connection.execute("ROLLBACK")
        return True
    except sqlite3.OperationalError:
        return False
    finally:
        connection.close()


def trial_state(storage: optuna.storages.BaseStorage, trial: FrozenTrial) -> TrialState:
    return storage.get_trial(trial._trial_id).state


def mid_trial(storage, trial: FrozenTrial, database: Path) -> bool:
    """The trial still runs, and its (stopped) worker holds no write lock on the storage."""
    return trial_state(storage, trial) == TrialState.RUNNING and holds_no_write_lock(database)


def pause_a_trial(
    process: subprocess.Popen, storage, names: list[str], database: Path
) -> tuple[FrozenTrial, int]:
    """Stop the worker of a running trial of `names` while it holds no write lock on the
    storage; (that trial, the worker's pid)."""
    paused = []

    def one_paused() -> bool:
        for trial in running_trials(storage, names):
            pid = int(trial.user_attrs["worker"].rsplit(":", 1)[1])
            if stopped_in([pid], partial(mid_trial, storage, trial, database)):
                paused.append((trial, pid))
                return True
        return False

    wait_for(one_paused, lambda: alive(process), "no trial of those studies ran")
    return paused[0]


def alive(process: subprocess.Popen) -> None:
    assert process.poll() is None, process.stderr.read()


@pytest.mark.parametrize("phase", ["tuning", "repeats"])
def test_a_trial_resumed_after_it_was_marked_failed_never_ends_the_suite(tmp_path, phase):
    suite_path = tmp_path / "late.toml"
    suite_path.write_text(suite_text(phase))
    suite = load_suite(suite_path)
    plans = tuning_plan(suite)
    database = tmp_path / "tuning.db"
    url = f"sqlite:///{database}"
    store_path = tmp_path / "runs.db"
    command = [sys.executable, "-m", "harness.cli", "run", str(suite_path), "--jobs", "2"]
    command += ["--quiet", "--store", str(store_path), "--tuning-database", url]
    storage = open_storage(url, 1, 3)  # its tables made before the command opens it
    process = subprocess.Popen(
        command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True
    )
    names = [p.study for p in plans] if phase == "tuning" else [repeats_study_name(suite, plans)]
    paused, pid = None, None
    try:
        paused, pid = pause_a_trial(process, storage, names, database)
        # the other worker marks it failed once the grace period has passed
        failed = lambda: trial_state(storage, paused) == TrialState.FAIL  # noqa: E731
        wait_for(failed, lambda: alive(process), "the paused trial was never marked failed")
        resume([pid])
        pid = None
        _, errors = process.communicate(timeout=240)
    finally:
        if pid is not None:
            resume([pid])
        if process.poll() is None:
            process.kill()
    assert process.returncode == 0, errors[-3000:]
    assert errors == ""
    assert trial_state(storage, paused) == TrialState.FAIL  # dropped, never counted
    studies = [optuna.load_study(study_name=p.study, storage=storage) for p in plans]
    assert [usage(study).finished for study in studies] == [TRIALS] * len(plans)
    runs = store.load_runs(store_path, [suite.name])
    wanted = {(p.contender, seed) for p in plans for seed in suite.seed_list}
    assert Counter(zip(runs["contender"], runs["seed"], strict=True)) == Counter(wanted)
