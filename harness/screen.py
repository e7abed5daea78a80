"""Renders each command's outcome on the terminal (results to stdout, interruptions to stderr).

Only formatting: the command functions in harness/commands/ decide and compute everything.
"""

from __future__ import annotations

import sys
from collections.abc import Iterator
from contextlib import contextmanager
from typing import TYPE_CHECKING, Any

from rich.console import Console
from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeRemainingColumn
from rich.text import Text

from harness.commands.feedback import Advance, Feedback
from harness.formatting import visible

if TYPE_CHECKING:
    from harness.commands.gates import BaselineOutcome, GateRun
    from harness.commands.inspect import (
        CheckOutcome,
        DescribeOutcome,
        HistoryOutcome,
        ReportOutcome,
        ShowOutcome,
    )
    from harness.commands.run import MapOutcome, RunOutcome
    from harness.commands.tuned import TunedOutcome, TuningFrames
    from harness.execution.executed import Executed

# piped output (logs, CI) is not cut to 80 columns: long contender names would be cut short


class VisibleConsole(Console):
    """A console that shows the control and bidirectional characters of the text it is given
    (harness.formatting.visible): a label cannot clear the screen or reorder a line. Styles
    are added after this, so they still reach the terminal."""

    def render_str(self, text: str, **options: Any) -> Text:
        return super().render_str(visible(text), **options)


console = VisibleConsole(width=None if sys.stdout.isatty() else 200)
errors = VisibleConsole(stderr=True, highlight=False, markup=False)  # messages hold user text


def feedback(quiet: bool = False) -> Feedback:
    """Notes on the console, and a progress bar of finished runs unless quiet."""

    @contextmanager
    def progress(description: str, total: int) -> Iterator[Advance]:
        columns = (TextColumn("[bold]{task.description}"), BarColumn(), MofNCompleteColumn())
        timing = (TextColumn("eta"), TimeRemainingColumn())
        with Progress(*columns, *timing, console=console, disable=quiet) as bar:
            task = bar.add_task(description, total=total)
            yield lambda: bar.advance(task)

    def note(text: str) -> None:
        if not quiet:
            console.print(text, markup=False)

    return Feedback(note, progress)


def interrupted(executed: Executed, store: object) -> None:
    """Why an execution stopped: Ctrl-C, or one line per run that could not finish."""
    if not executed.interrupted:
        for line in executed.failures:
            errors.print(f"heedful: error: {line}", soft_wrap=True)
        return
    errors.print(
        f"interrupted: {executed.finished} runs finished and stored in {store}; "
        "run the same command again to continue"
    )


def show_check(outcome: CheckOutcome) -> None:
    suite, facts = outcome.suite, outcome.facts
    classes = "" if facts.classes is None else f"{facts.classes} classes, "
    console.print(
        f"{outcome.path}: suite '{suite.name}' is valid: {facts.nodes} nodes, {facts.edges} "
        f"edges, {classes}{facts.features} features",
        markup=False,
    )
    if facts.edge_homophily is not None:  # node labels: only for tasks that read them
        console.print(
            f"measured homophily: edge {facts.edge_homophily:.3f}, node {facts.node_homophily:.3f}"
        )
    for note in facts.notes:
        console.print(f"note: {note}", markup=False)
    for warning in facts.warnings:
        console.print(warning, markup=False, soft_wrap=True)
    for contender, count in outcome.runs.items():
        ablation = suite.ablation.get(contender)
        mode = ablation.mode.replace("_", "-") if ablation else ""
        points = f" ({count // len(suite.seed_list)} {mode} points)" if ablation else ""
        console.print(f"  {contender}: {count} runs{points}", markup=False)
    if outcome.map_runs:
        levels = len(suite.homophily_map.levels)
        console.print(
            f"  homophily map: {outcome.map_runs} runs ({levels} levels on matched synthetic "
            "graphs)"
        )
        console.print(
            f"{outcome.total + outcome.map_runs} runs in total ({outcome.total} of the suite, "
            f"{outcome.map_runs} of the homophily map)"
        )
    else:
        console.print(f"{outcome.total} runs in total")
    for line in outcome.memory:
        console.print(line, markup=False)
    for line in outcome.tuning:
        console.print(line, markup=False)


def show_run(outcome: RunOutcome) -> None:
    from harness.report.terminal import (
        print_ablation,
        print_arrival,
        print_summary,
        print_verdicts,
    )

    if outcome.executed.stopped:
        interrupted(outcome.executed, outcome.store)
        return
    executed = outcome.executed
    console.print(
        f"{executed.finished} runs trained, {executed.skipped} reused from {outcome.store}",
        markup=False,
    )
    print_summary(outcome.summary, console)
    print_ablation(outcome.ablation, console)
    print_arrival(outcome.report, console)
    print_verdicts(outcome.report, console)


def show_map(outcome: MapOutcome) -> None:
    from harness.report.homophily_map import print_homophily_map

    if outcome.executed.failures:
        interrupted(outcome.executed, outcome.store)
    if outcome.executed.stopped:
        if outcome.executed.interrupted:
            errors.print(f"interrupted: homophily map runs so far are stored in {outcome.store}")
        return
    print_homophily_map(outcome.summary, console)


def show_tuning(frames: TuningFrames) -> None:
    from harness.report.tuning import print_tuning

    print_tuning(frames.summary, frames.settings, frames.curves, frames.parameters, console)


def show_tuned(outcome: TunedOutcome) -> None:
    from harness.report.terminal import print_summary, print_verdicts

    show_tuning(outcome.tuning)
    print_summary(outcome.summary, console)
    if outcome.report is not None:
        print_verdicts(outcome.report, console)


def show_description(outcome: DescribeOutcome, form: str) -> None:
    from harness.report.profile import print_profile, profile_json

    if form == "json":
        sys.stdout.write(profile_json(outcome.profile) + "\n")
    else:
        print_profile(outcome.profile, console, outcome.notes)


def show_runs(outcome: ShowOutcome, form: str) -> None:
    from harness.report import records
    from harness.report.terminal import (
        print_ablation,
        print_arrival,
        print_summary,
        print_verdicts,
    )

    if form == "table":
        print_summary(outcome.summary, console)
        print_ablation(outcome.ablation, console)
        for report in outcome.reports:
            print_arrival(report, console)
            print_verdicts(report, console)
    else:
        writer = {"json": records.as_json, "csv": records.as_csv, "md": records.as_markdown}
        text = writer[form](outcome.runs)
        if outcome.predictions is not None:
            text = records.as_json(outcome.runs, outcome.predictions)
        sys.stdout.write(text.rstrip("\n") + "\n")


def show_baseline(outcome: BaselineOutcome) -> None:
    if outcome.executed.stopped:
        interrupted(outcome.executed, outcome.store)
        return
    console.print(
        f"baseline of suite '{outcome.suite.name}' ({outcome.runs} runs) saved to {outcome.saved}",
        markup=False,
    )


def show_gate(outcome: GateRun) -> None:
    from harness.report.gate_terminal import print_gate

    if outcome.gate is None:
        interrupted(outcome.executed, outcome.store)
        return
    print_gate(outcome.gate, console)


def show_history(outcome: HistoryOutcome) -> None:
    from harness.report.gate_terminal import history_table

    console.print(history_table(outcome.history, outcome.suite))


def show_report(outcome: ReportOutcome) -> None:
    from harness.report.terminal import print_report

    print_report(outcome.report, console)
    console.print(
        f"{len(outcome.written)} files written to {outcome.out}", highlight=False, markup=False
    )
