"""Commands that read a suite file or the store and train nothing: check, describe, tuning,
show, history and report."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import pandas as pd

from harness.errors import InputError
from harness.schema.suite import Suite
from harness.storage.suite_runs import SuiteFile, SuiteRuns

if TYPE_CHECKING:
    from harness.analysis.axes import AblationView
    from harness.analysis.suite_report import SuiteReport
    from harness.commands.tuned import TuningFrames
    from harness.data.profile import DatasetProfile
    from harness.execution.preflight import DataFacts
    from harness.report.documents.document import Document
    from harness.storage.predictions import NodePredictions


@dataclass(frozen=True)
class CheckOutcome:
    """A valid suite: its data's facts, its runs per contender and how it is tuned."""

    path: str
    suite: Suite
    facts: DataFacts
    runs: dict[str, int]  # contender -> runs over all its points and seeds
    total: int  # the suite's own runs
    memory: tuple[str, ...]  # estimated peak memory: the fixed part, then one line per figure
    tuning: tuple[str, ...] = ()
    map_runs: int = 0  # runs the homophily map adds on matched synthetic graphs
    status: int = 0


def check(file: SuiteFile, memory_limit: float | None = None) -> CheckOutcome:
    from harness.execution.memory import check_suite_memory, memory_outline
    from harness.execution.preflight import preflight
    from harness.planning import expand, map_run_count

    suite, suite_path = file.suite, file.path
    specs = expand(suite)
    memory = check_suite_memory(suite, suite_path, 1, memory_limit)  # synthetic: before data
    facts = preflight(suite, suite_path)
    memory = memory or check_suite_memory(suite, suite_path, 1, memory_limit, facts.size)
    runs = {name: sum(1 for s in specs if s.contender == name) for name in suite.contenders}
    outline: tuple[str, ...] = ()
    if suite.tuning is not None:
        from harness.tuning.study import tuning_outline

        outline = tuple(tuning_outline(suite))
    lines = tuple(memory_outline(memory))
    return CheckOutcome(
        suite_path, suite, facts, runs, len(specs), lines, outline, map_run_count(suite)
    )


@dataclass(frozen=True)
class DescribeOutcome:
    profile: DatasetProfile
    notes: tuple[str, ...]
    status: int = 0


def describe(file: SuiteFile) -> DescribeOutcome:
    from harness.storage.profiles import suite_profile

    found, notes = suite_profile(file.suite, file.path)
    return DescribeOutcome(found, tuple(notes))


def tuning(chosen: SuiteRuns, storage: str | None) -> TuningFrames:
    """What tuning did for a tuned suite."""
    from harness.commands.tuned import tuning_frames
    from harness.tuning.storage import default_storage_url

    suite = chosen.suite
    if suite.tuning is None:
        raise InputError(f"{chosen.given}: tuning: the suite has no [tuning] table")
    return tuning_frames(suite, storage or default_storage_url(chosen.store))


@dataclass(frozen=True)
class ShowOutcome:
    """Stored runs, and for the table format their summary, ablation view and analyses."""

    runs: pd.DataFrame
    summary: pd.DataFrame | None = None
    ablation: AblationView | None = None
    reports: tuple[SuiteReport, ...] = ()  # one per suite
    status: int = 0
    predictions: dict[str, NodePredictions] | None = None  # by run key, when asked for


def show(chosen: SuiteRuns, analysed: bool, predictions: bool = False) -> ShowOutcome:
    """Stored runs of a suite (or all); `predictions` adds their test-node probabilities."""
    from harness.analysis.axes import ablation_view, label_points
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_each
    from harness.storage import store
    from harness.storage.predictions import load_predictions

    runs = store.load_runs(chosen.store, chosen.names)
    if runs.empty:
        named = f" for suite '{chosen.given}'" if chosen.name is not None else ""
        raise InputError(f"{chosen.store}: no stored runs{named}")
    if not analysed:
        kept = load_predictions(chosen.store, runs["key"]) if predictions else None
        return ShowOutcome(runs, predictions=kept)
    settings = chosen.settings
    reports = tuple(analyse_each(runs, settings))
    summary = summarise(label_points(runs), settings.confidence)
    return ShowOutcome(runs, summary, ablation_view(runs, settings.confidence), reports)


@dataclass(frozen=True)
class HistoryOutcome:
    suite: str
    history: pd.DataFrame  # harness.storage.gate_history.load_history
    status: int = 0


def history(chosen: SuiteRuns) -> HistoryOutcome:
    from harness.storage.gate_history import load_history

    name = chosen.name
    frame = load_history(chosen.store, name)
    if frame.empty:
        raise InputError(
            f"{chosen.store}: no gate runs stored for suite '{name}'; run `heedful gate` first"
        )
    return HistoryOutcome(name, frame)


@dataclass(frozen=True)
class ReportOutcome:
    report: SuiteReport
    out: Path
    written: tuple[Path, ...]
    document: Document | None = None  # what the files say, for the screen
    status: int = 0


def report(chosen: SuiteRuns, out: Path) -> ReportOutcome:
    from harness.analysis.suite_report import analyse_store
    from harness.report.documents.suite import suite_document
    from harness.report.documents.trend import trend_png
    from harness.report.formats.folder import prepared, write_report
    from harness.storage.gate_history import stored_history

    analysed = analyse_store(chosen)
    out = prepared(out)  # before drawing: a bad folder fails fast
    trend = trend_png(stored_history(chosen.store, analysed.suite))
    document = suite_document(analysed, drawn=True, trend=trend)
    return ReportOutcome(analysed, out, tuple(write_report(document, out)), document)
