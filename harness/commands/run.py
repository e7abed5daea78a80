"""`run`: run a suite's specs (or tune it), reuse stored runs, analyse what is stored.

Heavy modules (torch, PyG, the analysis) are imported inside the functions: spawned workers
start before them, so that their imports overlap this process's.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import pandas as pd

from harness.commands.executing import (
    ExecutedStatus,
    check_cluster_use,
    connected_cluster,
    execute_specs,
)
from harness.commands.feedback import SILENT, Feedback
from harness.commands.tuned import TunedOutcome, run_tuned
from harness.errors import InputError
from harness.execution.executed import Executed
from harness.execution.executors import ClusterLink, Executor, Resources, executor_for
from harness.schema.suite import Suite
from harness.storage.suite_runs import SuiteRuns

if TYPE_CHECKING:
    from harness.analysis.axes import AblationView
    from harness.analysis.homophily_map import HomophilyMapSummary
    from harness.analysis.suite_report import SuiteReport
    from harness.data.profile import DatasetProfile
    from harness.storage.database import Location

__all__ = ["check_cluster_use", "connected_cluster"]  # the command line imports them from here


@dataclass(frozen=True)
class RunOutcome(ExecutedStatus):
    """A fixed-settings suite run: what ran, and the analysis of its stored runs."""

    suite: Suite
    store: Location
    executed: Executed
    summary: pd.DataFrame | None = None  # per contender and point (analysis.stats.summarise)
    ablation: AblationView | None = None
    report: SuiteReport | None = None
    profile: DatasetProfile | None = None  # the data's, stored; the homophily map matches it


@dataclass(frozen=True)
class MapOutcome(ExecutedStatus):
    """The homophily map: its runs on matched synthetic graphs and their summary."""

    planned: int
    store: Location
    executed: Executed
    summary: HomophilyMapSummary | None = None


def run_suite(
    chosen: SuiteRuns,
    jobs: int,
    threads: int,
    storage: str | None,
    memory_limit: float | None = None,
    feedback: Feedback = SILENT,
    cluster: ClusterLink | None = None,
) -> RunOutcome | TunedOutcome:
    """Run or tune a suite file, reusing stored runs; stops before training when a run's
    estimated peak memory (times `jobs`) exceeds `memory_limit` GiB (default: the machine's)."""
    from harness.execution.memory import check_suite_memory
    from harness.execution.pool import start_method, start_workers

    suite, suite_path = chosen.suite, chosen.given
    # processes x threads checked against the cores (a cluster connects once they fit)
    executor = executor_for(Resources(jobs, threads, cluster=cluster))
    if suite.tuning is not None:
        return run_tuned(chosen, executor, jobs, storage, memory_limit, feedback)
    if storage is not None:
        raise InputError(
            f"--tuning-database: suite '{suite.name}' has no [tuning] table, so nothing would use "
            "that database; allowed: --tuning-database with a suite that tunes"
        )
    check_suite_memory(suite, suite_path, jobs, memory_limit)  # synthetic: before data
    # spawned workers start before the heavy imports below, so that theirs overlap this
    # process's; forked ones start later, when needed, and inherit them
    early = jobs > 1 and start_method(threads) == "spawn"
    preload = ("harness.execution.local",)  # the run code, loaded while this process imports
    workers = start_workers(jobs - 1, threads, preload) if early else None
    if workers is not None:
        executor = executor_for(Resources(jobs, threads, workers, cluster))
    try:
        return run_fixed(chosen, executor, jobs, memory_limit, feedback)
    except BaseException:
        if workers is not None:
            workers.terminate()
        raise


def run_fixed(
    chosen: SuiteRuns,
    executor: Executor,
    jobs: int,
    memory_limit: float | None,
    feedback: Feedback,
) -> RunOutcome:
    """A fixed-settings suite on the executor (`jobs` for the memory check), then its analysis."""
    from harness.analysis.axes import ablation_view, label_points
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_suite_runs
    from harness.execution.memory import check_suite_memory
    from harness.execution.preflight import preflight
    from harness.planning import expand
    from harness.storage.profiles import record_profile
    from harness.storage.selection import spec_runs

    suite, suite_path, store_path = chosen.suite, chosen.given, chosen.store
    specs = expand(suite)
    facts = preflight(suite, suite_path)
    check_suite_memory(suite, suite_path, jobs, memory_limit, facts.size)
    for warning in facts.warnings:
        feedback.note(warning)
    profile = record_profile(suite, store_path)
    executed = execute_specs(specs, store_path, executor, feedback)
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
    outcome: RunOutcome,
    jobs: int,
    threads: int,
    feedback: Feedback = SILENT,
    cluster: ClusterLink | None = None,
) -> MapOutcome:
    """The suite's contenders on synthetic graphs matched to its data, across edge homophily."""
    from harness.analysis.homophily_map import summarise_map
    from harness.planning import map_specs
    from harness.storage.selection import spec_runs

    suite, store_path = outcome.suite, outcome.store
    specs = map_specs(suite, outcome.profile)
    feedback.note(f"homophily map: {len(specs)} runs on matched synthetic graphs")
    executor = executor_for(Resources(jobs, threads, cluster=cluster))
    executed = execute_specs(specs, store_path, executor, SILENT)
    if executed.stopped:
        return MapOutcome(len(specs), store_path, executed)
    summary = summarise_map(spec_runs(store_path, specs), outcome.profile, suite.metric)
    return MapOutcome(len(specs), store_path, executed, summary)
