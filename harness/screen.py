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

# piped output (logs, CI) is 100 columns wide; a terminal's own width otherwise


class VisibleConsole(Console):
    """A console that shows the control and bidirectional characters of the text it is given
    (harness.formatting.visible): a label cannot clear the screen or reorder a line. Styles
    are added after this, so they still reach the terminal."""

    def render_str(self, text: str, **options: Any) -> Text:
        return super().render_str(visible(text), **options)


console = VisibleConsole(width=None if sys.stdout.isatty() else 100)
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
            console.print(text, markup=False, soft_wrap=True)

    return Feedback(note, progress)


def interrupted(executed: Executed, store: object) -> None:
    """Why an execution stopped: Ctrl-C, or one line per run that could not finish."""
    if not executed.interrupted:
        for line in executed.failures:
            errors.print(f"heedful: error: {line}", soft_wrap=True)
        return
    errors.print(
        f"interrupted: {executed.finished} runs finished and stored in {store}; "
        "run the same command again to continue",
        markup=False,
        soft_wrap=True,
    )


# one fact per line, never wrapped: paths and names stay whole for grep and copying
def show_check(outcome: CheckOutcome) -> None:
    suite, facts = outcome.suite, outcome.facts
    classes = "" if facts.classes is None else f"{facts.classes} classes, "
    console.print(
        f"{outcome.path}: suite '{suite.name}' is valid: {facts.nodes} nodes, {facts.edges} "
        f"edges, {classes}{facts.features} features",
        markup=False,
        soft_wrap=True,
    )
    if facts.edge_homophily is not None:  # node labels: only for tasks that read them
        console.print(
            f"measured homophily: edge {facts.edge_homophily:.3f}, node {facts.node_homophily:.3f}",
            soft_wrap=True,
        )
    for note in facts.notes:
        console.print(f"note: {note}", markup=False, soft_wrap=True)
    for warning in facts.warnings:
        console.print(warning, markup=False, soft_wrap=True)
    for contender, count in outcome.runs.items():
        ablation = suite.ablation.get(contender)
        mode = ablation.mode.replace("_", "-") if ablation else ""
        points = f" ({count // len(suite.seed_list)} {mode} points)" if ablation else ""
        console.print(f"  {contender}: {count} runs{points}", markup=False, soft_wrap=True)
    if outcome.map_runs:
        levels = len(suite.homophily_map.levels)
        console.print(
            f"  homophily map: {outcome.map_runs} runs ({levels} levels on matched synthetic "
            "graphs)",
            soft_wrap=True,
        )
        console.print(
            f"{outcome.total + outcome.map_runs} runs in total ({outcome.total} of the suite, "
            f"{outcome.map_runs} of the homophily map)",
            soft_wrap=True,
        )
    else:
        console.print(f"{outcome.total} runs in total", soft_wrap=True)
    for line in outcome.memory:
        console.print(line, markup=False, soft_wrap=True)
    for line in outcome.tuning:
        console.print(line, markup=False, soft_wrap=True)


def show_documents(documents: list) -> None:
    from harness.report.formats import terminal

    for document in documents:
        terminal.show(document, console)


def show_run(outcome: RunOutcome) -> None:
    from harness.report.documents.summary import summary_documents

    if outcome.executed.stopped:
        interrupted(outcome.executed, outcome.store)
        return
    executed = outcome.executed
    console.print(
        f"{executed.finished} runs trained, {executed.skipped} reused from {outcome.store}",
        markup=False,
        soft_wrap=True,
    )
    show_documents(summary_documents(outcome.summary, outcome.ablation, (outcome.report,)))


def show_map(outcome: MapOutcome) -> None:
    from harness.report.documents.homophily_map import map_document

    if outcome.executed.failures:
        interrupted(outcome.executed, outcome.store)
    if outcome.executed.stopped:
        if outcome.executed.interrupted:
            errors.print(
                f"interrupted: homophily map runs so far are stored in {outcome.store}",
                markup=False,
                soft_wrap=True,
            )
        return
    show_documents([map_document(outcome.summary)])


def show_tuning(frames: TuningFrames) -> None:
    from harness.report.documents.tuning import tuning_document

    show_documents(
        [tuning_document(frames.summary, frames.settings, frames.curves, frames.parameters)]
    )


def show_tuned(outcome: TunedOutcome) -> None:
    from harness.report.documents.summary import summary_documents

    show_tuning(outcome.tuning)
    reports = (outcome.report,) if outcome.report is not None else ()
    show_documents(summary_documents(outcome.summary, None, reports))


def show_description(outcome: DescribeOutcome, form: str) -> None:
    from harness.report.documents.profile import profile_document
    from harness.report.formats import FORMATS

    document = profile_document(outcome.profile, outcome.notes)
    if form == "json":
        sys.stdout.write(FORMATS["json"].render(document) + "\n")
    else:
        show_documents([document])


def show_runs(outcome: ShowOutcome, form: str) -> None:
    """`table`: each suite's summary and verdicts; json, csv, md: the stored runs."""
    from harness.report.documents.records import records_document
    from harness.report.documents.summary import summary_documents
    from harness.report.formats import by_option

    if form == "table":
        show_documents(summary_documents(outcome.summary, outcome.ablation, outcome.reports))
        return
    text = by_option(form).render(records_document(outcome.runs, outcome.predictions))
    sys.stdout.write(text.rstrip("\n") + "\n")


def show_baseline(outcome: BaselineOutcome) -> None:
    if outcome.executed.stopped:
        interrupted(outcome.executed, outcome.store)
        return
    console.print(
        f"baseline of suite '{outcome.suite.name}' ({outcome.runs} runs) saved to {outcome.saved}",
        markup=False,
        soft_wrap=True,
    )


def show_gate(outcome: GateRun) -> None:
    from harness.report.documents.gate import gate_document

    if outcome.gate is None:
        interrupted(outcome.executed, outcome.store)
        return
    show_documents([gate_document(outcome.gate)])


def show_history(outcome: HistoryOutcome) -> None:
    from harness.report.documents.gate import history_document

    show_documents([history_document(outcome.history, outcome.suite)])


def show_report(outcome: ReportOutcome) -> None:
    show_documents([outcome.document])
    console.print(
        f"{len(outcome.written)} files written to {outcome.out}",
        highlight=False,
        markup=False,
        soft_wrap=True,
    )
