"""Rich tables for the terminal."""

from __future__ import annotations

import math
from dataclasses import replace

import pandas as pd
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from harness.api import SuiteReport
from harness.report.tables import TextTable, all_tables, comparison_table, reasons

METRIC_LABELS = {"accuracy": "accuracy", "macro_f1": "macro-F1", "roc_auc": "ROC-AUC"}


def number(value: float, digits: int = 3) -> str:
    return (
        "-"
        if value is None or (isinstance(value, float) and math.isnan(value))
        else f"{value:.{digits}f}"
    )


def summary_table(summary: pd.DataFrame, title: str) -> Table:
    """Contender, metric mean +- std, 95% t-interval, costs; the best mean in bold green."""
    metric = METRIC_LABELS.get(summary["metric"].iloc[0], summary["metric"].iloc[0])
    table = Table(title=title, title_justify="left")
    for header in (
        "contender",
        "model",
        "seeds",
        f"test {metric}",
        "95% t-interval",
        "s/epoch",
        "params",
        "peak MB",
    ):
        table.add_column(header, justify="left" if header in ("contender", "model") else "right")
    best = summary["mean"].idxmax()
    for index, row in summary.iterrows():
        style = "bold green" if index == best else None
        table.add_row(
            str(row["contender"]),
            str(row["model"]),
            str(row["seeds"]),
            f"{number(row['mean'])} ± {number(row['std'])}",
            f"[{number(row['ci_low'])}, {number(row['ci_high'])}]",
            number(row["seconds_per_epoch"], 4),
            f"{row['params']:,}",
            number(row["peak_mb"], 2),
            style=style,
        )
    return table


def print_summary(summary: pd.DataFrame, console: Console | None = None) -> None:
    console = console or Console()
    for suite, group in summary.groupby("suite", sort=False):
        console.print(summary_table(group.reset_index(drop=True), f"Suite: {suite}"))


VERDICT_STYLES = {
    "better": "bold green",
    "worse": "bold red",
    "no difference that matters": "cyan",
    "inconclusive": "yellow",
}


# the paired-comparison columns that fit a terminal; every column is in the report files
TERMINAL_COMPARISON = ("attention", "baseline", "seeds", "difference", "95% t", "Holm p", "verdict")


def narrow(part: TextTable, headers: tuple[str, ...]) -> TextTable:
    """The table with only the columns whose header starts with one of `headers`."""
    keep = [i for i, h in enumerate(part.header) if h.startswith(headers)]
    return replace(
        part,
        header=tuple(part.header[i] for i in keep),
        rows=tuple(tuple(row[i] for i in keep) for row in part.rows),
        right=tuple(part.right[i] for i in keep),
    )


def text_table(part: TextTable) -> Table:
    """A report table (harness.report.tables) as a rich Table; names are not read as markup."""
    table = Table(title=part.title, title_justify="left", caption=part.note or None)
    for header, right in zip(part.header, part.right, strict=True):
        table.add_column(escape(header), justify="right" if right else "left")
    for row in part.rows:
        style = VERDICT_STYLES.get(row[-1]) if part.name == "comparisons" else None
        table.add_row(*(escape(cell) for cell in row), style=style)
    return table


def print_verdicts(report: SuiteReport, console: Console | None = None) -> None:
    """The paired comparisons, the reason for each verdict and the headline sentence."""
    console = console or Console()
    if not report.comparisons.empty:
        console.print(text_table(narrow(comparison_table(report), TERMINAL_COMPARISON)))
    for line in reasons(report):
        console.print(f"  {escape(line)}", highlight=False)
    console.print(f"[bold]Verdict:[/bold] {escape(report.headline)}", highlight=False)


def print_report(report: SuiteReport, console: Console | None = None) -> None:
    """Every table of the report, then the verdicts."""
    console = console or Console()
    for part in all_tables(report):
        if part.name != "comparisons":
            console.print(text_table(part))
    print_verdicts(report, console)
