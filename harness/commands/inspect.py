"""Commands that read a suite file or the store and train nothing: check, describe, tuning,
show, history and report."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from harness.errors import InputError
from harness.planning import load_suite
from harness.schema.suite import Suite

if TYPE_CHECKING:
    from harness.report.documents.document import Document
    from harness.storage.database import Location


def suite_names(suite_argument: str | None) -> list[str] | None:
    """A suite argument may be a suite file or a stored suite name; None means every suite."""
    if suite_argument is None:
        return None
    if Path(suite_argument).is_file():
        return [load_suite(suite_argument).name]
    return [suite_argument]


@dataclass(frozen=True)
class CheckOutcome:
    """A valid suite: its data's facts, its runs per contender and how it is tuned."""

    path: str
    suite: Suite
    facts: Any  # harness.execution.preflight.DataFacts
    runs: dict[str, int]  # contender -> runs over all its points and seeds
    total: int  # the suite's own runs
    memory: tuple[str, ...]  # estimated peak memory: the fixed part, then one line per figure
    tuning: tuple[str, ...] = ()
    map_runs: int = 0  # runs the homophily map adds on matched synthetic graphs
    status: int = 0


def check(suite_path: str, memory_limit: float | None = None) -> CheckOutcome:
    from harness.execution.memory import check_suite_memory, memory_outline
    from harness.execution.preflight import preflight
    from harness.planning import expand, map_run_count

    suite = load_suite(suite_path)
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
    profile: Any  # harness.data.profile.DatasetProfile
    notes: tuple[str, ...]
    status: int = 0


def describe(suite_path: str) -> DescribeOutcome:
    from harness.storage.profiles import suite_profile

    found, notes = suite_profile(load_suite(suite_path), suite_path)
    return DescribeOutcome(found, tuple(notes))


def tuning(suite_path: str, store_path: Location, storage: str | None) -> Any:
    """What tuning did for a tuned suite (a harness.commands.tuned.TuningFrames)."""
    from harness.commands.tuned import tuning_frames
    from harness.tuning.storage import default_storage_url

    suite = load_suite(suite_path)
    if suite.tuning is None:
        raise InputError(f"{suite_path}: tuning: the suite has no [tuning] table")
    return tuning_frames(suite, storage or default_storage_url(store_path))


@dataclass(frozen=True)
class ShowOutcome:
    """Stored runs, and for the table format their summary, ablation view and analyses."""

    runs: pd.DataFrame
    summary: pd.DataFrame | None = None
    ablation: Any = None  # harness.analysis.axes.AblationView
    reports: tuple = ()  # one SuiteReport per suite
    status: int = 0
    predictions: dict | None = None  # run key -> NodePredictions, when asked for


def show(
    store_path: Location, suite_argument: str | None, analysed: bool, predictions: bool = False
) -> ShowOutcome:
    """Stored runs of a suite (or all); `predictions` adds their test-node probabilities."""
    from harness.analysis.axes import ablation_view, label_points
    from harness.analysis.stats import summarise
    from harness.analysis.suite_report import analyse_each, settings_of
    from harness.storage import store
    from harness.storage.predictions import load_predictions

    runs = store.load_runs(store_path, suite_names(suite_argument))
    if runs.empty:
        raise InputError(
            f"{store_path}: no stored runs"
            + (f" for suite '{suite_argument}'" if suite_argument else "")
        )
    if not analysed:
        kept = load_predictions(store_path, runs["key"]) if predictions else None
        return ShowOutcome(runs, predictions=kept)
    settings = settings_of(suite_argument)
    reports = tuple(analyse_each(runs, settings))
    summary = summarise(label_points(runs), settings.confidence)
    return ShowOutcome(runs, summary, ablation_view(runs, settings.confidence), reports)


@dataclass(frozen=True)
class HistoryOutcome:
    suite: str
    history: pd.DataFrame  # harness.storage.gate_history.load_history
    status: int = 0


def history(store_path: Location, suite_argument: str) -> HistoryOutcome:
    from harness.storage.gate_history import load_history

    name = suite_names(suite_argument)[0]
    frame = load_history(store_path, name)
    if frame.empty:
        raise InputError(
            f"{store_path}: no gate runs stored for suite '{name}'; run `heedful gate` first"
        )
    return HistoryOutcome(name, frame)


@dataclass(frozen=True)
class ReportOutcome:
    report: Any  # harness.analysis.suite_report.SuiteReport
    out: Path
    written: tuple[Path, ...]
    document: Document | None = None  # what the files say, for the screen
    status: int = 0


def report(store_path: Location, suite_argument: str, out: Path) -> ReportOutcome:
    from harness.analysis.suite_report import analyse_store
    from harness.report.documents.suite import suite_document
    from harness.report.documents.trend import trend_png
    from harness.report.formats.folder import prepared, write_report
    from harness.storage.gate_history import stored_history

    analysed = analyse_store(store_path, suite_argument)
    out = prepared(out)  # before drawing: a bad folder fails fast
    trend = trend_png(stored_history(store_path, analysed.suite))
    document = suite_document(analysed, drawn=True, trend=trend)
    return ReportOutcome(analysed, out, tuple(write_report(document, out)), document)
