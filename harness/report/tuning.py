"""Rich rendering of what tuning did; every figure comes from harness.tuning.results."""

from __future__ import annotations

import pandas as pd
from rich.console import Console, Group
from rich.markup import escape
from rich.table import Table

from harness.formatting import fixed, sparkline


def budget_text(row: pd.Series) -> str:
    parts = []
    if not pd.isna(row["budget_trials"]):
        parts.append(f"{int(row['budget_trials'])} trials")
    if not pd.isna(row["budget_seconds"]):
        parts.append(f"{row['budget_seconds']:g} s")
    return " or ".join(parts)


def tuning_tables(
    summary: pd.DataFrame,
    settings: pd.DataFrame,
    curves: pd.DataFrame,
    parameters: pd.DataFrame | None = None,
) -> Group:
    """Budget use per contender, best settings with importances, best curves, sizing."""
    used = Table(title="Tuning: the same budget for every contender", title_justify="left")
    for header in ("contender", "model", "budget", "done", "pruned", "failed", "seconds"):
        used.add_column(header, justify="left" if header in ("contender", "model") else "right")
    used.add_column("epochs", justify="right")
    used.add_column("best val", justify="right")
    curve_table = Table(title="Validation curve of the best trial", title_justify="left")
    for header in ("contender", "epochs", "first", "best", "curve"):
        curve_table.add_column(
            header, justify="left" if header in ("contender", "curve") else "right"
        )
    for _, row in summary.iterrows():
        curve = curves[curves["contender"] == row["contender"]]["validation"].tolist()
        if curve:
            curve_table.add_row(
                escape(str(row["contender"])),
                str(len(curve)),
                fixed(curve[0]),
                fixed(max(curve)),
                sparkline(curve, width=40),
            )
        used.add_row(
            escape(str(row["contender"])),
            str(row["model"]),
            budget_text(row),
            str(row["completed"]),
            str(row["pruned"]),
            str(row["failed"]),
            fixed(row["seconds"], 1),
            str(row["epochs"]),
            fixed(row["best_validation"]),
        )
    chosen = Table(title="Best settings and their importance (fANOVA)", title_justify="left")
    for header in ("contender", "setting", "value", "importance"):
        chosen.add_column(header, justify="right" if header == "importance" else "left")
    for _, row in settings.iterrows():
        value = row["value"]
        shown = f"{value:.4g}" if isinstance(value, float) else str(value)
        chosen.add_row(
            escape(row["contender"]), row["setting"], escape(shown), fixed(row["importance"], 2)
        )
    parts = [used, chosen, curve_table]
    if parameters is not None and not parameters.empty:
        sized = Table(
            title="Equal parameters: hidden width sized to the target", title_justify="left"
        )
        for header in ("contender", "hidden", "params", "target", "deviation"):
            sized.add_column(header, justify="left" if header == "contender" else "right")
        for _, row in parameters.iterrows():
            sized.add_row(
                escape(row["contender"]),
                str(row["hidden"]),
                f"{row['params']:,}",
                f"{row['target']:,}",
                f"{row['deviation']:+.1%}",
            )
        parts.append(sized)
    return Group(*parts)


def print_tuning(
    summary: pd.DataFrame,
    settings: pd.DataFrame,
    curves: pd.DataFrame,
    parameters: pd.DataFrame | None = None,
    console: Console | None = None,
) -> None:
    (console or Console()).print(tuning_tables(summary, settings, curves, parameters))
