"""Rich tables for the terminal."""

from __future__ import annotations

import math
from dataclasses import replace

import pandas as pd
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from harness.analysis.axes import AblationView
from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, metric_label, percent
from harness.report.breakdown import TERMINAL_ROWS, headline_table, report_tables
from harness.report.diagnostic_tables import arrival_table
from harness.report.tables import comparison_table
from harness.report.text_table import TextTable
from harness.report.wording import (
    breakdown_summary,
    headline_sentence,
    notices,
    reasons,
    warning_line,
)


def summary_table(summary: pd.DataFrame, title: str) -> Table:
    """Contender, metric mean +- std, t-interval, costs; the best mean in bold green."""
    metric = metric_label(summary["metric"].iloc[0])
    level = percent(summary["confidence"].iloc[0])
    table = Table(title=title, title_justify="left")
    for header in (
        "contender",
        "model",
        "seeds",
        f"test {metric}",
        f"{level} t-interval",
        "s/epoch",
        "params",
        "peak MB",
    ):
        table.add_column(header, justify="left" if header in ("contender", "model") else "right")
    best = summary["mean"].idxmax()
    for index, row in summary.iterrows():
        style = "bold green" if index == best else None
        table.add_row(
            escape(str(row["contender"])),  # variant labels hold [brackets]
            str(row["model"]),
            str(row["seeds"]),
            f"{fixed(row['mean'])} ± {fixed(row['std'])}",
            f"[{fixed(row['ci_low'])}, {fixed(row['ci_high'])}]"
            + (" clipped" if row.get("ci_clipped", False) else ""),
            fixed(row["seconds_per_epoch"], 4),
            f"{row['params']:,}",
            fixed(row["peak_mb"], 2),
            style=style,
        )
    return table


def print_summary(summary: pd.DataFrame, console: Console | None = None) -> None:
    console = console or Console()
    for suite, group in summary.groupby("suite", sort=False):
        console.print(summary_table(group.reset_index(drop=True), f"Suite: {escape(str(suite))}"))
        for row in group.itertuples():
            for warning in getattr(row, "warnings", ()):
                console.print(warning_line(warning), markup=False, highlight=False)


def _share(value: float, chance: float) -> str:
    """A measured share with its uniform-attention value in brackets; "-" when not measured."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    return f"{fixed(value)} ({fixed(chance)})"


def axis_level_table(
    levels: pd.DataFrame, attention: pd.DataFrame, metric: str, confidence: float = 0.95
) -> Table:
    """One section per axis: each level's test metric, its effect, and its attention."""
    first = levels.iloc[0]
    label = metric_label(metric)
    level = percent(confidence)
    table = Table(
        title=f"Ablation of '{escape(str(first['contender']))}' by axis "
        f"(suite {escape(str(first['suite']))})",
        title_justify="left",
        caption="effect: level mean minus the mean of the axis's levels, in points (0.01). "
        "Attention: mean over layers, heads and runs; uniform attention gives entropy 1 and "
        "the chance share in brackets.",
        caption_justify="left",
    )
    for header in (
        "axis",
        "level",
        "runs",
        f"test {label} [{level} CI]",
        f"effect [{level} CI]",
        "entropy",
        "same label",
    ):
        table.add_column(header, justify="left" if header in ("axis", "level") else "right")
    keyed = attention.set_index(["axis", "level"]) if not attention.empty else None
    for axis, group in levels.groupby("axis", sort=False):
        for index, row in enumerate(group.itertuples()):
            found = keyed is not None and (axis, row.level) in keyed.index
            diag = keyed.loc[(axis, row.level)] if found else None
            table.add_row(
                escape(str(axis)) if index == 0 else "",
                escape(str(row.level)),
                str(row.runs),
                f"{fixed(row.mean)} [{fixed(row.t_low)}, {fixed(row.t_high)}]",
                f"{row.effect:+.1f} [{row.effect_low:+.1f}, {row.effect_high:+.1f}]",
                fixed(diag["entropy_ratio"], 2) if found else "-",
                _share(diag["same_label_share"], diag["neighbour_homophily"]) if found else "-",
            )
        table.add_section()
    return table


def attention_diagnostics_table(attention: pd.DataFrame) -> Table:
    """Per variant: does its attention differ from neighbour averaging?"""
    unlabelled = bool(attention["same_label_share"].isna().all())
    table = Table(
        title="Attention diagnostics (mean over layers, heads and seeds)",
        title_justify="left",
        caption="entropy: relative to uniform attention over the same neighbourhood (1 = "
        "uniform). Shares: attention on the self-loop, and on same-label neighbours; in "
        "brackets what uniform attention would give."
        + (" Same label skipped: these runs used no node labels." if unlabelled else ""),
        caption_justify="left",
    )
    for header in ("contender", "runs", "entropy", "self share", "same label"):
        table.add_column(header, justify="left" if header == "contender" else "right")
    for row in attention.itertuples():
        table.add_row(
            escape(str(row.variant)),
            str(row.runs),
            fixed(row.entropy_ratio),
            _share(row.self_share, row.uniform_self_share),
            _share(row.same_label_share, row.neighbour_homophily),
        )
    return table


def print_ablation(view: AblationView, console: Console | None = None) -> None:
    """Grouped-by-axis tables of every ablated contender, then attention diagnostics."""
    console = console or Console()
    by_level = view.attention_levels
    if not view.levels.empty:
        for (suite, contender), group in view.levels.groupby(["suite", "contender"], sort=False):
            mine = by_level[(by_level["suite"] == suite) & (by_level["contender"] == contender)]
            diagnostics = mine.drop(columns=["suite", "contender"])
            console.print(axis_level_table(group, diagnostics, view.metric, view.confidence))
    for _, group in view.attention_variants.groupby("suite", sort=False):
        console.print(attention_diagnostics_table(group))


VERDICT_STYLES = {
    "better": "bold green",
    "worse": "bold red",
    "no difference that matters": "cyan",
    "inconclusive": "yellow",
}


# the paired-comparison columns that fit a terminal (LEVEL: the interval's confidence); every
# column is in the report files
TERMINAL_COMPARISON = (
    "attention",
    "baseline",
    "seeds",
    "difference",
    "LEVEL t",
    "Holm p",
    "verdict",
)


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
    table = Table(
        title=escape(part.title),
        title_justify="left",
        caption=escape(part.note) if part.note else None,
    )
    for header, right in zip(part.header, part.right, strict=True):
        table.add_column(escape(header), justify="right" if right else "left")
    verdicts = part.name in ("comparisons", "breakdown", "breakdown_headline")
    for row in part.rows:
        style = VERDICT_STYLES.get(row[-1]) if verdicts else None
        table.add_row(*(escape(cell) for cell in row), style=style)
    return table


def print_verdicts(report: SuiteReport, console: Console | None = None) -> None:
    """The paired comparisons, the reason for each verdict and the headline sentence."""
    console = console or Console()
    if not report.comparisons.empty:
        level = percent(report.settings.confidence)
        headers = tuple(h.replace("LEVEL", level) for h in TERMINAL_COMPARISON)
        console.print(text_table(narrow(comparison_table(report), headers)))
    for line in reasons(report):
        console.print(f"  {escape(line)}", highlight=False)
    console.print(f"[bold]Verdict:[/bold] {escape(headline_sentence(report))}", highlight=False)
    nodes = headline_table(report, TERMINAL_ROWS, summary=False)
    if nodes is not None:
        console.print(text_table(nodes))
        console.print(escape(breakdown_summary(report.breakdown)), highlight=False)


def print_arrival(report: SuiteReport, console: Console | None = None) -> None:
    """The new-node arrival table of an inductive suite; nothing for other suites."""
    part = arrival_table(report)
    if part is not None:
        (console or Console()).print(text_table(part))


def print_report(report: SuiteReport, console: Console | None = None) -> None:
    """Every table of the report, then the verdicts."""
    console = console or Console()
    for line in notices(report):
        console.print(line, markup=False, highlight=False, soft_wrap=True)
    for part in report_tables(report):
        if part.name not in ("comparisons", "breakdown_headline"):
            console.print(text_table(part))
    print_verdicts(report, console)
