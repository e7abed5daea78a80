"""Execution: finished runs are kept across a SIGKILL, none is stored twice, reruns reuse all."""

from __future__ import annotations

import dataclasses
import os
import signal
import sqlite3
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest
import torch

import harness.execution.local
import harness.execution.pool
import harness.execution.runs
from harness.cli import main
from harness.errors import InputError
from harness.execution.local import execute
from harness.execution.pool import check_threads
from harness.execution.runs import pending
from harness.planning import expand, load_suite
from harness.storage import store
from harness.training.runs import perform
from tests.pausing import resume, stopped_in, wait_for

ROOT = Path(__file__).resolve().parents[1]


def stored_rows(path: Path) -> dict[str, tuple]:
    """Every stored row by key, read-only; empty while the store does not exist yet."""
    try:
        connection = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=5)
    except sqlite3.OperationalError:
        return {}
    try:
        rows = connection.execute("SELECT * FROM runs").fetchall()
        names = [d[0] for d in connection.execute("SELECT * FROM runs").description]
    except sqlite3.OperationalError:  # the table is not created yet
        return {}
    finally:
        connection.close()
    key = names.index("key")
    return {row[key]: row for row in rows}


def test_one_thread_workers_are_forked_on_linux_and_others_spawned(monkeypatch):
    monkeypatch.setattr(sys, "platform", "linux")
    assert [harness.execution.pool.start_method(t) for t in (1, 2)] == ["fork", "spawn"]
    monkeypatch.setattr(sys, "platform", "darwin")
    assert harness.execution.pool.start_method(1) == "spawn"


def test_more_threads_are_allowed_only_while_processes_times_threads_fit_the_cores(monkeypatch):
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 8)
    for jobs, threads in [(1, 8), (2, 4), (3, 2), (8, 1)]:
        check_threads(jobs, threads)
    for jobs, threads in [(1, 9), (3, 3), (5, 2)]:
        with pytest.raises(InputError, match=rf"{jobs} jobs x {threads} threads need"):
            check_threads(jobs, threads)
    # more processes than cores only compete for them, each with its own copy of torch
    for jobs in (9, 1000):
        with pytest.raises(InputError, match=rf"--jobs: {jobs} jobs need {jobs} cores, 8 are"):
            check_threads(jobs, 1)


def test_too_many_threads_is_a_one_line_error_before_anything_runs(
    tiny_suite, store_path, monkeypatch, capsys
):
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 2)
    status = main(
        ["run", str(tiny_suite), "--store", str(store_path), "--jobs", "2", "--threads", "2"]
    )
    assert status == 2
    message = capsys.readouterr().err.strip()
    assert message == (
        "heedful: error: --threads: 2 jobs x 2 threads need 4 cores, 2 are usable; "
        "allowed: jobs x threads <= 2"
    )
    assert not store_path.exists()


def test_each_process_trains_with_the_threads_asked_for(tiny_suite, store_path, monkeypatch):
    seen = []
    real_perform = harness.execution.runs.perform
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 2)
    monkeypatch.setattr(
        harness.execution.runs,
        "perform",
        lambda spec: seen.append(torch.get_num_threads()) or real_perform(spec),
    )
    specs = expand(load_suite(tiny_suite))[:1]
    try:
        execute(specs, store_path, jobs=1, threads=2)
    finally:
        torch.set_num_threads(1)
    assert seen == [2]


def test_execute_stores_each_run_once_and_skips_finished(tiny_suite, store_path):
    specs = expand(load_suite(tiny_suite))
    seen: list[str] = []
    first = execute(specs[:4], store_path, jobs=1, on_finished=seen.append)
    assert (first.planned, first.skipped, first.finished, first.interrupted) == (4, 0, 4, False)
    assert sorted(seen) == sorted(s.contender for s in specs[:4])
    assert [s.key for s in pending(specs, store_path)] == [s.key for s in specs[4:]]
    second = execute(specs, store_path, jobs=1)
    assert (second.planned, second.skipped, second.finished) == (6, 4, 2)
    runs = store.load_runs(store_path)
    assert sorted(runs["key"]) == sorted(s.key for s in specs)
    assert execute(specs, store_path, jobs=2).finished == 0  # nothing left: no worker starts


@pytest.mark.parametrize("threads", [1, pytest.param(2, marks=pytest.mark.slow)])  # 2: spawned
def test_two_jobs_store_every_run_once_with_the_figures_of_one_job(
    tiny_suite, tmp_path, monkeypatch, threads
):
    """--jobs 2 forks its worker with one thread per process and spawns it with two; either
    way every run is stored once, with the figures one process with as many threads gives."""
    monkeypatch.setattr(harness.execution.pool, "available_cores", lambda: 4)
    specs = expand(load_suite(tiny_suite))
    try:
        outcome = execute(specs, tmp_path / "two.db", jobs=2, threads=threads)
        execute(specs, tmp_path / "one.db", jobs=1, threads=threads)
    finally:
        torch.set_num_threads(1)
    assert (outcome.finished, outcome.interrupted) == (len(specs), False)
    columns = ["val_metric", "test_metric", "epochs", "best_epoch", "curve"]
    two = store.load_runs(tmp_path / "two.db").set_index("key").sort_index()[columns]
    one = store.load_runs(tmp_path / "one.db").set_index("key").sort_index()[columns]
    assert len(two) == len(specs)
    pd.testing.assert_frame_equal(two, one)


KILL_SUITE_CHANGES = {"seeds = 2": "seeds = 6"}


@pytest.fixture
def kill_suite(tiny_suite_text, write_suite) -> Path:
    """The tiny suite on 6 seeds: 18 runs; the store is polled far faster than runs finish."""
    text = tiny_suite_text
    for old, new in KILL_SUITE_CHANGES.items():
        text = text.replace(old, new)
    return write_suite(text, "kill.toml")


@pytest.mark.slow
def test_sigkill_then_rerun_loses_nothing_and_stores_nothing_twice(kill_suite, tmp_path, capsys):
    """`heedful run --jobs 2` is killed with SIGKILL after some runs are stored; a rerun
    completes the suite, keeps every finished row byte for byte, and the killed command's
    figures equal those of the same runs trained again in this process."""
    store_file = tmp_path / "killed.db"
    command = [sys.executable, "-m", "harness.cli", "run", str(kill_suite)]
    command += ["--jobs", "2", "--quiet", "--store", str(store_file)]
    process = subprocess.Popen(
        command,
        cwd=ROOT,
        start_new_session=True,  # its own process group: the kill reaches the workers too
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    specs = expand(load_suite(kill_suite))

    def alive() -> None:
        assert process.poll() is None, process.stderr.read().decode()

    def stopped_with_runs_left() -> bool:  # the kill lands on a known state
        group = [process.pid, *children(process.pid)]
        return stopped_in(group, lambda: 2 <= len(stored_rows(store_file)) < len(specs))

    try:
        wait_for(stopped_with_runs_left, alive, "two runs were never stored with runs left")
    finally:
        os.killpg(process.pid, signal.SIGKILL)
        process.wait()
    kept = stored_rows(store_file)
    assert 2 <= len(kept) < len(specs)

    assert main(["run", str(kill_suite), "--store", str(store_file), "--quiet"]) == 0
    reused = f"{len(specs) - len(kept)} runs trained, {len(kept)} reused from {store_file}"
    assert reused in " ".join(capsys.readouterr().out.split())  # rich wraps long lines
    after = stored_rows(store_file)
    assert sorted(after) == sorted(s.key for s in specs)  # every run, each exactly once
    with sqlite3.connect(store_file) as connection:
        assert connection.execute("SELECT count(*) FROM runs").fetchone()[0] == len(specs)
    for key, row in kept.items():
        assert after[key] == row  # finished rows unchanged, finishing time included

    # another process, same seed: the same figures, bit for bit
    runs = store.load_runs(store_file).set_index("key")
    for spec in [s for s in specs if s.key in kept][:2]:
        result = perform(spec)
        row = runs.loc[spec.key]
        assert (row["val_metric"], row["test_metric"]) == (result.val_metric, result.test_metric)
        assert (row["epochs"], row["best_epoch"]) == (result.epochs, result.best_epoch)
        assert row["curve"] == store.significant(result.curve)  # as the store keeps it

    assert main(["run", str(kill_suite), "--store", str(store_file), "--quiet"]) == 0
    assert f"0 runs trained, {len(specs)} reused" in " ".join(capsys.readouterr().out.split())
    assert stored_rows(store_file) == after


@pytest.mark.parametrize("method", [pytest.param("spawn", marks=pytest.mark.slow), "fork"])
def test_a_worker_gives_the_figures_of_this_process(tiny_suite, method):
    """The worker path (spawned or forked process, worker set-up, one torch thread) changes no
    figure."""
    import multiprocessing

    spec = next(s for s in expand(load_suite(tiny_suite)) if s.model == "gat")
    context = multiprocessing.get_context(method)
    with context.Pool(1, initializer=harness.execution.pool.worker_setup, initargs=(1,)) as pool:
        remote = pool.apply(perform, (spec,))
    local = perform(spec)
    assert (remote.val_metric, remote.test_metric) == (local.val_metric, local.test_metric)
    assert (remote.epochs, remote.best_epoch, remote.params) == (
        local.epochs,
        local.best_epoch,
        local.params,
    )
    assert remote.curve == local.curve and remote.test_scores == local.test_scores


def test_a_lone_last_run_on_a_large_graph_gets_every_core_it_was_given(
    tiny_suite, store_path, monkeypatch
):
    monkeypatch.setattr(harness.execution.local, "available_cores", lambda: 2)
    spec = expand(load_suite(tiny_suite))[0]
    large = spec.data.model_copy(update={"nodes": 100_000, "average_degree": 20})
    large_spec = dataclasses.replace(spec, data=large)
    assert harness.execution.local.last_run_threads(large_spec, jobs=2, threads=1) == 2
    assert harness.execution.local.last_run_threads(large_spec, jobs=1, threads=1) == 1
    assert harness.execution.local.last_run_threads(spec, jobs=2, threads=1) == 1  # small graph
    # one run left with two jobs: it trains with both cores, and its record says so
    monkeypatch.setattr(harness.execution.local, "LARGE_GRAPH_EDGES", 0)
    try:
        execute([spec], store_path, jobs=2, threads=1)
    finally:
        torch.set_num_threads(1)
    extras = store.load_runs(store_path)["extras"].iloc[0]
    assert extras["threads"] == 2 and torch.get_num_threads() == 1


# A worker process killed on its own (as the kernel's out-of-memory killer would): the run it
# held is rerun once, a run that ends its worker twice is reported, every other run is stored.


def children(pid: int) -> list[int]:
    """Process ids of a process's children (Linux /proc)."""
    found = []
    for task in Path(f"/proc/{pid}/task").iterdir():
        found += [int(c) for c in (task / "children").read_text().split()]
    return found


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="reads children from /proc")
@pytest.mark.slow
def test_a_worker_killed_mid_run_is_replaced_and_the_suite_completes(kill_suite, tmp_path):
    """Only the worker gets SIGKILL, mid-run; the command carries on, reruns the run the worker
    held, and stores every run exactly once."""
    store_file = tmp_path / "runs.db"
    command = [sys.executable, "-m", "harness.cli", "run", str(kill_suite)]
    command += ["--jobs", "2", "--quiet", "--store", str(store_file)]
    process = subprocess.Popen(command, cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    specs = expand(load_suite(kill_suite))
    frozen: list[int] = []

    def alive() -> None:
        assert process.poll() is None, process.stderr.read().decode()

    def stopped_mid_run() -> bool:  # a worker is up, two runs are stored, others are left
        frozen[:] = [process.pid, *children(process.pid)]
        left = lambda: 2 <= len(stored_rows(store_file)) < len(specs)  # noqa: E731
        return len(frozen) > 1 and stopped_in(frozen, left)

    try:
        wait_for(stopped_mid_run, alive, "no worker ran with two runs stored and runs left")
        os.kill(frozen[1], signal.SIGKILL)
        resume(frozen)
        out, err = process.communicate(timeout=240)
    finally:
        resume(frozen)
        if process.poll() is None:
            process.kill()
            process.wait()
    assert process.returncode == 0, err.decode()
    assert f"{len(specs)} runs trained, 0 reused" in " ".join(out.decode().split())
    assert sorted(stored_rows(store_file)) == sorted(s.key for s in specs)  # each exactly once


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="reads children from /proc")
@pytest.mark.slow
def test_ctrl_c_to_the_whole_command_keeps_finished_runs_and_no_worker_speaks(kill_suite, tmp_path):
    """Ctrl-C in a terminal reaches every process of the command's group: the workers ignore
    it, the command stops, says how many runs it kept, and exits 130 without a traceback."""
    store_file = tmp_path / "interrupted.db"
    command = [sys.executable, "-m", "harness.cli", "run", str(kill_suite)]
    command += ["--jobs", "2", "--quiet", "--store", str(store_file)]
    process = subprocess.Popen(
        command,
        cwd=ROOT,
        start_new_session=True,  # its own process group, as a terminal's foreground job
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL),
    )
    specs = expand(load_suite(kill_suite))
    frozen: list[int] = []

    def alive() -> None:
        assert process.poll() is None, process.stderr.read()

    def stopped_with_runs_left() -> bool:  # a worker is up, a run is stored, others are left
        frozen[:] = [process.pid, *children(process.pid)]
        left = lambda: 1 <= len(stored_rows(store_file)) < len(specs)  # noqa: E731
        return len(frozen) > 1 and stopped_in(frozen, left)

    try:
        wait_for(stopped_with_runs_left, alive, "no worker ran with a run stored and runs left")
        os.killpg(process.pid, signal.SIGINT)  # to every process of the group, while stopped
        resume(frozen)
        _, errors = process.communicate(timeout=240)
    finally:
        resume(frozen)
        if process.poll() is None:
            os.killpg(process.pid, signal.SIGKILL)
            process.wait()
    assert process.returncode == 130, errors
    kept = stored_rows(store_file)
    assert 1 <= len(kept) < len(specs)
    said = " ".join(errors.split())  # rich wraps long lines
    assert f"interrupted: {len(kept)} runs finished and stored in {store_file}" in said
    assert "Traceback" not in errors and "KeyboardInterrupt" not in errors


@pytest.fixture
def doomed_in_workers(monkeypatch):  # noqa: ANN201 - doomed(spec) marks the run
    """doomed(spec): that run ends every worker process that starts it (tests/doomed_run.py,
    loaded by the workers alone); this process would train it as usual."""

    def doom(spec) -> None:
        monkeypatch.setenv("DOOMED_RUN_KEY", spec.key)  # inherited by forked and spawned
        modules = (*harness.execution.local.WORKER_MODULES, "tests.doomed_run")
        monkeypatch.setattr(harness.execution.local, "WORKER_MODULES", modules)

    return doom


@pytest.mark.slow  # spawns the replacements
def test_a_run_that_kills_its_worker_twice_is_reported_and_the_rest_stored(
    tiny_suite, store_path, doomed_in_workers
):
    """The first worker is forked, its replacement spawned: the run ends both."""
    specs = expand(load_suite(tiny_suite))
    doomed = specs[0]  # the first run goes to the worker, and a rerun never to this process
    doomed_in_workers(doomed)
    outcome = execute(specs, store_path, jobs=2)
    assert (outcome.finished, outcome.interrupted) == (len(specs) - 1, False)
    assert [(lost.key, lost.exit_code) for lost in outcome.lost] == [(doomed.key, -9)]
    assert pending(specs, store_path) == [doomed]
    assert len(store.load_runs(store_path)) == len(specs) - 1


@pytest.mark.slow  # spawns the replacements
def test_the_run_command_names_the_lost_run_and_exits_3(
    tiny_suite, store_path, doomed_in_workers, capsys
):
    specs = expand(load_suite(tiny_suite))
    doomed_in_workers(specs[0])
    status = main(["run", str(tiny_suite), "--jobs", "2", "--quiet", "--store", str(store_path)])
    assert status == 3
    error = capsys.readouterr().err
    assert (
        f"tiny_couriers: run attention seed 0 (key {specs[0].key}) ended its worker process "
        "twice (SIGKILL); likely cause: memory"
    ) in " ".join(error.split())
    assert "Traceback" not in error
    assert len(store.load_runs(store_path)) == len(specs) - 1


def test_ctrl_c_just_after_a_run_is_stored_counts_that_run(tiny_suite, store_path, monkeypatch):
    """Ctrl-C can land between a run's commit and its count: the count comes from the store."""
    real_save = store.save_run
    saved = []

    def save_then_interrupt(path, record):
        real_save(path, record)
        saved.append(record["key"])
        if len(saved) == 2:
            raise KeyboardInterrupt

    monkeypatch.setattr(store, "save_run", save_then_interrupt)
    outcome = execute(expand(load_suite(tiny_suite)), store_path, jobs=1)
    assert (outcome.finished, outcome.interrupted) == (2, True)
    assert sorted(store.load_runs(store_path)["key"]) == sorted(saved)
