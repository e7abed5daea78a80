"""`run`: run a suite's specs (or tune it), reuse stored runs, analyse what is stored.

Heavy modules (torch, PyG, the analysis) are imported inside the functions: spawned workers
start before them, so that their imports overlap this process's.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import pandas as pd

from harness.commands.feedback import SILENT, Feedback
from harness.errors import InputError
from harness.planning import load_suite
from harness.schema.suite import Suite

if TYPE_CHECKING:
    from harness.storage.database import Location

INTERRUPTED = 130
RUNS_FAILED = 3


@dataclass(frozen=True)
class Executed:
    """What an execution did: runs trained, reused from the store, whether it was cut off, and
    one line per run that could not finish (naming its spec)."""

    trained: int
    reused: int
    interrupted: bool
    failures: tuple[str, ...] = ()

    @property
    def stopped(self) -> bool:
        return self.interrupted or bool(self.failures)

    @property
    def status(self) -> int:
        if self.interrupted:
            return INTERRUPTED
        return RUNS_FAILED if self.failures else 0


def check_cluster_use(
    suite_path: str, store_path: Location, storage: str | None, address: str | None
) -> None:
    """Before connecting: a tuned suite on a cluster needs a storage its workers reach."""
    if address is None:
        return
    suite = load_suite(suite_path)
    if suite.tuning is not None:
        from harness.tuning.on_cluster import check_shared
        from harness.tuning.storage import default_storage_url

        check_shared(address, storage or default_storage_url(store_path))


@contextmanager
def connected_cluster(address: str | None) -> Iterator[Any]:
    """The Dask cluster of `--cluster` (its workers checked before anything is stored), or
    None without one; the cluster is handed to the command functions below."""
    if address is None:
        yield None
        return
    try:
        from harness.execution.cluster import connected
    except ImportError:
        raise InputError(
            "--cluster: Dask's distributed is not installed; allowed: install Heedful's "
            "`cluster` extra (pip install 'heedful[cluster]')"
        ) from None
    with connected(address) as cluster:
        yield cluster


@dataclass(frozen=True)
class RunOutcome:
    """A fixed-settings suite run: what ran, and the analysis of its stored runs."""

    suite: Suite
    store: Location
    executed: Executed
    summary: pd.DataFrame | None = None  # per contender and point (analysis.stats.summarise)
    ablation: Any = None  # harness.analysis.axes.AblationView
    report: Any = None  # harness.analysis.suite_report.SuiteReport
    profile: Any = None  # the data's stored profile, which the homophily map matches

    @property
    def status(self) -> int:
        return self.executed.status


@dataclass(frozen=True)
class TuningFrames:
    """What tuning did, per contender: budget used, chosen settings, curves, parameters."""

    summary: pd.DataFrame
    settings: pd.DataFrame
    curves: pd.DataFrame
    parameters: pd.DataFrame


@dataclass(frozen=True)
class TunedOutcome:
    """A tuned suite run: the tuning, and the analysis of the seeded repeats."""

    suite: Suite
    storage_url: str
    tuning: TuningFrames
    summary: pd.DataFrame
    report: Any = None  # SuiteReport; None when no repeat is stored
    status: int = 0


@dataclass(frozen=True)
class MapOutcome:
    """The homophily map: its runs on matched synthetic graphs and their summary."""

    planned: int
    store: Location
    executed: Executed
    summary: Any = None  # harness.analysis.homophily_map.HomophilyMapSummary

    @property
    def status(self) -> int:
        return self.executed.status


def execute_specs(
    specs: list,
    store_path: Location,
    jobs: int,
    threads: int,
    feedback: Feedback,
    workers=None,
    cluster=None,
) -> Executed:
    """Run the specs not stored yet on local processes (or on the cluster of `cluster`),
    counting each finished run in the feedback's progress."""
    from harness.execution.local import execute, pending

    todo = len(pending(specs, store_path))
    with feedback.progress(specs[0].suite if specs else "", todo) as advance:
        if cluster is None:
            done = execute(specs, store_path, jobs, lambda _: advance(), workers, threads)
        else:
            from harness.execution.cluster import execute_on_cluster

            done = execute_on_cluster(specs, store_path, cluster, threads, lambda _: advance())
    return Executed(done.finished, done.skipped, done.interrupted, done.failures)


def run_suite(
    suite_path: str,
    store_path: Location,
    jobs: int,
    threads: int,
    storage: str | None,
    memory_limit: float | None = None,
    feedback: Feedback = SILENT,
    cluster=None,
) -> RunOutcome | TunedOutcome:
    """Run or tune a suite file, reusing stored runs; stops before training when a run's
    estimated peak memory (times `jobs`) exceeds `memory_limit` GiB (default: the machine's)."""
    from harness.execution.memory import check_suite_memory
    from harness.execution.pool import check_threads, start_method, start_workers

    suite = load_suite(suite_path)
    check_threads(jobs, threads)
    if suite.tuning is not None:
        return run_tuned(
            suite, suite_path, store_path, jobs, threads, storage, memory_limit, feedback, cluster
        )
    if storage is not None:
        raise InputError(
            f"--storage: suite '{suite.name}' has no [tuning] table, so nothing would use "
            f"{storage!r}; allowed: --storage with a suite that tunes"
        )
    check_suite_memory(suite, suite_path, jobs, memory_limit)  # synthetic: before data
    # spawned workers start before the heavy imports below, so that theirs overlap this
    # process's; forked ones start later, when needed, and inherit them
    early = jobs > 1 and start_method(threads) == "spawn"
    preload = ("harness.execution.local",)  # the run code, loaded while this process imports
    workers = start_workers(jobs - 1, threads, preload) if early else None
    try:
        return run_fixed(
            suite, suite_path, store_path, jobs, threads, memory_limit, feedback, workers, cluster
        )
    except BaseException:
        if workers is not None:
            workers.terminate()
        raise


def run_fixed(
    suite: Suite,
    suite_path: str,
    store_path: Location,
    jobs: int,
    threads: int,
    memory_limit: float | None,
    feedback: Feedback,
    workers=None,
    cluster=None,
) -> RunOutcome:
    from harness.analysis.axes import ablation_view, label_points
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_suite_runs
    from harness.execution.memory import check_suite_memory
    from harness.execution.preflight import preflight
    from harness.planning import expand
    from harness.storage.profiles import record_profile
    from harness.storage.selection import spec_runs

    specs = expand(suite)
    facts = preflight(suite, suite_path)
    check_suite_memory(suite, suite_path, jobs, memory_limit, facts.size)
    profile = record_profile(suite, store_path)
    executed = execute_specs(specs, store_path, jobs, threads, feedback, workers, cluster)
    if executed.stopped:
        return RunOutcome(suite, store_path, executed)
    runs = spec_runs(store_path, specs)
    return RunOutcome(
        suite,
        store_path,
        executed,
        summarise(label_points(runs), suite.analysis.confidence),
        ablation_view(runs, suite.analysis.confidence),
        analyse_suite_runs(store_path, runs, suite),
        profile,
    )


def run_homophily_map(
    outcome: RunOutcome, jobs: int, threads: int, feedback: Feedback = SILENT, cluster=None
) -> MapOutcome:
    """The suite's contenders on synthetic graphs matched to its data, across edge homophily."""
    from harness.analysis.homophily_map import summarise_map
    from harness.planning import map_specs
    from harness.storage.selection import spec_runs

    suite, store_path = outcome.suite, outcome.store
    specs = map_specs(suite, outcome.profile)
    feedback.note(f"homophily map: {len(specs)} runs on matched synthetic graphs")
    executed = execute_specs(specs, store_path, jobs, threads, SILENT, cluster=cluster)
    if executed.stopped:
        return MapOutcome(len(specs), store_path, executed)
    summary = summarise_map(spec_runs(store_path, specs), outcome.profile, suite.metric)
    return MapOutcome(len(specs), store_path, executed, summary)


def checked_storage(suite: Suite, store_path: Location, storage: str | None) -> str:
    """The tuning storage URL (default: beside the result store), opened once to check it."""
    from harness.tuning.storage import default_storage_url, open_storage

    url = storage or default_storage_url(store_path)
    open_storage(url, suite.tuning.heartbeat_seconds, suite.tuning.grace_seconds)
    return url


def tuning_frames(suite: Suite, storage_url: str) -> TuningFrames:
    """What tuning did so far, read from the tuning storage."""
    from harness.tuning import results
    from harness.tuning.storage import open_storage

    tuning = suite.tuning
    storage = open_storage(storage_url, tuning.heartbeat_seconds, tuning.grace_seconds, False)
    summaries = results.tuning_summary(suite, storage)
    return TuningFrames(
        results.summary_frame(summaries),
        results.settings_frame(summaries),
        results.curve_frame(summaries),
        results.parameter_frame(suite, summaries),
    )


def run_tuned(
    suite: Suite,
    suite_path: str,
    store_path: Location,
    jobs: int,
    threads: int,
    storage: str | None,
    memory_limit: float | None,
    feedback: Feedback,
    cluster=None,
) -> TunedOutcome:
    """Tune every contender with one budget, then run the seeded repeats (shared storage)."""
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_suite_runs
    from harness.execution.memory import check_suite_memory
    from harness.execution.preflight import preflight
    from harness.storage import store
    from harness.storage.profiles import record_profile
    from harness.tuning.storage import parse_url, shown
    from harness.tuning.workers import work_in_processes

    url = checked_storage(suite, store_path, storage)  # a bad storage fails before any write
    check_suite_memory(suite, suite_path, jobs, memory_limit)
    facts = preflight(suite, suite_path)
    check_suite_memory(suite, suite_path, jobs, memory_limit, facts.size)
    record_profile(suite, store_path)
    shown_url = shown(parse_url(url))  # never the password
    where = f"{jobs} worker(s)" if cluster is None else f"the cluster {cluster.address}"
    feedback.note(f"{suite.name}: tuning with {where} on storage {shown_url}")
    if cluster is None:
        work = work_in_processes(suite_path, store_path, url, jobs, threads)
    else:
        from harness.tuning.on_cluster import work_on_cluster

        work = work_on_cluster(suite, store_path, url, cluster, threads)
    frames = tuning_frames(suite, url)
    runs = store.load_runs(store_path, [suite.name])
    runs = runs[runs["key"].isin(work.keys)]
    report = analyse_suite_runs(store_path, runs, suite) if not runs.empty else None
    return TunedOutcome(suite, url, frames, summarise(runs, suite.analysis.confidence), report)
