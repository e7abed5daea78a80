"""`baseline` and `gate`: run (or reuse) a suite's runs, then save or compare a baseline."""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from harness.commands.executing import ExecutedStatus, execute_specs
from harness.commands.feedback import SILENT, Feedback
from harness.execution.executed import Executed
from harness.execution.executors import ClusterLink, Resources, executor_for
from harness.execution.preflight import preflight
from harness.execution.runs import pending
from harness.gate.baseline import (
    build_baseline,
    check_gateable,
    check_matches,
    contender_labels,
    environment_differences,
    environment_fingerprint,
    read_baseline,
    unmatched_points,
    write_baseline,
)
from harness.gate.compare import GateOutcome, evaluate
from harness.gate.records import history_records
from harness.output_files import write_output
from harness.planning import RunSpec, expand
from harness.report.documents.gate import gate_document
from harness.report.formats import FORMATS
from harness.schema.suite import Suite
from harness.storage import gate_history
from harness.storage.selection import spec_runs
from harness.storage.suite_runs import SuiteRuns

if TYPE_CHECKING:
    from harness.storage.database import Location


def _run_for_gate(
    chosen: SuiteRuns,
    given: Resources,
    feedback: Feedback,
    check: Callable[[Suite, list[RunSpec]], None] = lambda suite, specs: None,
) -> tuple[Suite, list[RunSpec], Executed]:
    """A suite that can be gated, checked by `check` before its data loads; its runs trained,
    or reused from the store."""
    executor = executor_for(given)  # processes x threads checked first
    suite, suite_path, store_path = chosen.suite, chosen.given, chosen.store
    check_gateable(suite, suite_path)
    specs = expand(suite)
    check(suite, specs)
    preflight(suite, suite_path)
    todo = len(pending(specs, store_path))
    if todo:
        feedback.note(f"{suite.name}: training {todo} runs, reusing {len(specs) - todo}")
    return suite, specs, execute_specs(specs, store_path, executor, SILENT)


@dataclass(frozen=True)
class BaselineOutcome(ExecutedStatus):
    suite: Suite
    store: Location
    executed: Executed
    runs: int
    saved: Path | None = None


def baseline(
    chosen: SuiteRuns,
    save: Path,
    jobs: int,
    threads: int,
    feedback: Feedback = SILENT,
    cluster: ClusterLink | None = None,
) -> BaselineOutcome:
    given = Resources(jobs, threads, cluster=cluster)
    suite, specs, executed = _run_for_gate(chosen, given, feedback)
    store_path = chosen.store
    if executed.stopped:
        return BaselineOutcome(suite, store_path, executed, len(specs))
    document = build_baseline(
        suite, specs, spec_runs(store_path, specs), environment_fingerprint(threads)
    )
    write_baseline(save, document)
    return BaselineOutcome(suite, store_path, executed, len(specs), save)


@dataclass(frozen=True)
class GateRun:
    """A gate command: the execution, and the comparison with the baseline (None if cut off)."""

    store: Location
    executed: Executed
    gate: GateOutcome | None = None

    @property
    def status(self) -> int:
        return self.gate.exit_code if self.gate is not None else self.executed.status


def gate(
    chosen: SuiteRuns,
    baseline_path: Path,
    jobs: int,
    threads: int,
    junit: Path | None = None,
    markdown: Path | None = None,
    feedback: Feedback = SILENT,
    cluster: ClusterLink | None = None,
) -> GateRun:
    stored = read_baseline(baseline_path)
    given = Resources(jobs, threads, cluster=cluster)
    store_path = chosen.store
    suite, specs, executed = _run_for_gate(
        chosen,
        given,
        feedback,
        lambda suite, specs: check_matches(stored, suite, specs, baseline_path),
    )
    if executed.stopped:
        return GateRun(store_path, executed)
    environment = environment_fingerprint(threads)
    differences = environment_differences(stored.environment.model_dump(), environment)
    runs = spec_runs(store_path, specs)
    unmatched = unmatched_points(stored, specs)
    labels = [label for label in contender_labels(specs) if label in stored.contenders]
    outcome = evaluate(
        suite, labels, stored, runs, environment, differences, time.time(), unmatched
    )
    # the files first: one that cannot be written stops the gate (exit 2) before its history
    # is appended, so a rerun is not counted twice
    document = gate_document(outcome)
    for path, name in ((junit, "junit"), (markdown, "markdown")):
        if path:
            write_output(path, FORMATS[name].render(document))
    gate_history.append(store_path, history_records(outcome))
    return GateRun(store_path, executed, outcome)
