"""Rich tables for the terminal."""

from __future__ import annotations

import math

import pandas as pd
from rich.console import Console
from rich.table import Table

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
