"""Terminal rendering of a homophily map: one row per level, a marker row for the user's data."""

from __future__ import annotations

from rich.console import Console
from rich.markup import escape
from rich.table import Table

from harness.analysis.homophily_map import HomophilyMapSummary


def print_homophily_map(summary: HomophilyMapSummary, console: Console) -> None:
    frame = summary.table
    contenders = list(dict.fromkeys(frame["contender"]))
    table = Table(title=f"homophily map: test {summary.metric} on matched synthetic graphs")
    table.add_column("edge homophily", justify="right")
    for contender in contenders:
        table.add_column(escape(contender), justify="right")
    marked = False
    for level, rows in frame.groupby("level", sort=True):
        if not marked and summary.data_edge_homophily < level:
            table.add_row(
                f"[bold]your data {summary.data_edge_homophily:.3f}[/]", *[""] * len(contenders)
            )
            marked = True
        means = dict(zip(rows["contender"], rows["mean"], strict=True))
        best = max(means, key=means.get)
        cells = [f"[bold]{means[c]:.3f}[/]" if c == best else f"{means[c]:.3f}" for c in contenders]
        table.add_row(f"{level:g}", *cells)
    if not marked:
        table.add_row(
            f"[bold]your data {summary.data_edge_homophily:.3f}[/]", *[""] * len(contenders)
        )
    console.print(table)
    console.print(
        f"Your data's edge homophily is {summary.data_edge_homophily:.3f}; at the nearest level "
        f"({summary.nearest_level:g}) the best contender is {escape(summary.best_at_nearest)}. "
        "Bold: best mean per level."
    )
