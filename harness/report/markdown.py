"""The report as Markdown: pipe tables that render on common code hosts, plots as images."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.report.breakdown import report_tables
from harness.report.markdown_text import escape
from harness.report.plots import PLOT_TITLES
from harness.report.text_table import TextTable, facts
from harness.report.wording import headline_sentence, notices, reasons


def table(part: TextTable) -> str:
    def line(cells: tuple[str, ...]) -> str:
        return "| " + " | ".join(escape(c) for c in cells) + " |"

    rule = "| " + " | ".join("---:" if right else "---" for right in part.right) + " |"
    lines = [f"## {escape(part.title)}", "", line(part.header), rule]
    lines += [line(row) for row in part.rows]
    if part.note:
        lines += ["", escape(part.note)]
    return "\n".join(lines)


def render(report: SuiteReport, plots: list[str]) -> str:
    """The whole report; `plots` names the PNG files written to plots/ next to it."""
    parts = [
        f"# Heedful report: {escape(report.suite)}",
        "",
        f"> {escape(headline_sentence(report))}",
        "",
        escape(facts(report)),
    ]
    parts[1:1] = [line for notice in notices(report) for line in ("", f"**{escape(notice)}**")]
    for part in report_tables(report):
        parts += ["", table(part)]
        if part.name == "comparisons":
            parts += ["", "Verdicts:", ""] + [f"- {escape(line)}" for line in reasons(report)]
    if plots:
        parts += ["", "## Plots", ""]
        parts += [f"![{PLOT_TITLES[name]}](plots/{name}.png)" for name in plots]
    return "\n".join(parts) + "\n"
