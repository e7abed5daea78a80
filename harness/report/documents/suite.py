"""The suite report as one Document: notices, the headline verdict, the facts, every table with
the verdicts' reasons after the comparisons, the plots and the analysis frames for CSV."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.report.documents.document import Block, Document, Items, Plot
from harness.report.documents.plots import figures, plot_title
from harness.report.documents.suite_facts import facts
from harness.report.documents.suite_tables import all_tables, frames
from harness.report.documents.trend import TREND_TITLE
from harness.report.documents.wording import headline_sentence, notices, reasons


def suite_blocks(report: SuiteReport) -> list[Block]:
    """Every table in reading order, the verdicts' reasons right after the comparisons."""
    blocks: list[Block] = []
    for part in all_tables(report):
        blocks.append(part)
        if part.name == "comparisons":
            blocks.append(Items("Verdicts", tuple(reasons(report))))
    return blocks


def suite_document(
    report: SuiteReport, drawn: bool = False, trend: bytes | None = None
) -> Document:
    """The report of one suite; with `drawn`, its plots too (drawing takes a few seconds), and
    `trend`, the gate-history plot (PNG), last."""
    plots = (
        [Plot(name, plot_title(name, report), png) for name, png in figures(report).items()]
        if drawn
        else []
    )
    if trend is not None:
        plots.append(Plot("gate_trend", TREND_TITLE, trend))
    return Document(
        title=f"Heedful report: {report.suite}",
        headline=headline_sentence(report),
        notices=tuple(notices(report)),
        lead=facts(report),
        blocks=tuple(suite_blocks(report)),
        plots=tuple(plots),
        frames=frames(report),
        name=f"report {report.suite}",
    )
