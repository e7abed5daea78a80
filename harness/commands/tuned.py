"""A tuned suite: tune every contender with one budget, run the seeded repeats, and read what
tuning did from its storage."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import pandas as pd

from harness.commands.feedback import Feedback
from harness.execution.executors import Executor
from harness.schema.suite import Suite
from harness.storage.suite_runs import SuiteRuns

if TYPE_CHECKING:
    from harness.analysis.suite_report import SuiteReport
    from harness.storage.database import Location


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
    report: SuiteReport | None = None  # None when no repeat is stored
    status: int = 0


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
    chosen: SuiteRuns,
    executor: Executor,
    jobs: int,
    storage: str | None,
    memory_limit: float | None,
    feedback: Feedback,
) -> TunedOutcome:
    """Tune every contender with one budget, then run the seeded repeats (shared storage)."""
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_suite_runs
    from harness.execution.memory import check_suite_memory
    from harness.execution.preflight import preflight
    from harness.storage import store
    from harness.storage.profiles import record_profile
    from harness.tuning.storage import parse_url, shown
    from harness.tuning.workers import tune

    suite, suite_path, store_path = chosen.suite, chosen.given, chosen.store
    url = checked_storage(suite, store_path, storage)  # a bad storage fails before any write
    check_suite_memory(suite, suite_path, jobs, memory_limit)
    facts = preflight(suite, suite_path)
    check_suite_memory(suite, suite_path, jobs, memory_limit, facts.size)
    for warning in facts.warnings:
        feedback.note(warning)
    record_profile(suite, store_path)
    shown_url = shown(parse_url(url))  # never the password
    feedback.note(f"{suite.name}: tuning with {executor.where} on storage {shown_url}")
    work = tune(suite, store_path, url, executor)
    frames = tuning_frames(suite, url)
    runs = store.load_runs(store_path, [suite.name])
    runs = runs[runs["key"].isin(work.keys)]
    report = analyse_suite_runs(store_path, runs, suite) if not runs.empty else None
    return TunedOutcome(suite, url, frames, summarise(runs, suite.analysis.confidence), report)
