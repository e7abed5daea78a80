"""What tuning did, as a Document: budget use, best settings with their importance, the best
trial's validation curve and the equal-parameter sizing. Every figure comes from
harness.tuning.results."""

from __future__ import annotations

import pandas as pd

from harness.formatting import fixed, missing, sparkline
from harness.report.documents.document import Document, Table, table


def budget_text(row: pd.Series) -> str:
    parts = []
    if not missing(row["budget_trials"]):
        parts.append(f"{int(row['budget_trials'])} trials")
    if not missing(row["budget_seconds"]):
        parts.append(f"{row['budget_seconds']:g} s")
    return " or ".join(parts)


def budget_table(summary: pd.DataFrame) -> Table:
    header = ["contender", "model", "budget", "done", "pruned", "failed", "seconds", "epochs"]
    rows = [
        [
            str(row["contender"]),
            str(row["model"]),
            budget_text(row),
            str(row["completed"]),
            str(row["pruned"]),
            str(row["failed"]),
            fixed(row["seconds"], 1),
            str(row["epochs"]),
            fixed(row["best_validation"]),
        ]
        for _, row in summary.iterrows()
    ]
    title = "Tuning: the same budget for every contender"
    return table("tuning_budget", title, [*header, "best val"], rows)


def curve_table(summary: pd.DataFrame, curves: pd.DataFrame) -> Table:
    rows = []
    for contender in summary["contender"]:
        curve = curves[curves["contender"] == contender]["validation"].tolist()
        if curve:
            shape = sparkline(curve, width=40)
            rows.append(
                [str(contender), str(len(curve)), fixed(curve[0]), fixed(max(curve)), shape]
            )
    header = ["contender", "epochs", "first", "best", "curve"]
    return table("tuning_curves", "Validation curve of the best trial", header, rows)


def settings_table(settings: pd.DataFrame) -> Table:
    rows = [
        [
            str(row["contender"]),
            str(row["setting"]),
            f"{row['value']:.4g}" if isinstance(row["value"], float) else str(row["value"]),
            fixed(row["importance"], 2),
        ]
        for _, row in settings.iterrows()
    ]
    header = ["contender", "setting", "value", "importance"]
    return table("tuning_settings", "Best settings and their importance (fANOVA)", header, rows)


def sizing_table(parameters: pd.DataFrame) -> Table:
    rows = [
        [
            str(row["contender"]),
            str(row["hidden"]),
            f"{row['params']:,}",
            f"{row['target']:,}",
            f"{row['deviation']:+.1%}",
        ]
        for _, row in parameters.iterrows()
    ]
    header = ["contender", "hidden", "params", "target", "deviation"]
    title = "Equal parameters: hidden width sized to the target"
    return table("tuning_sizing", title, header, rows)


def tuning_document(
    summary: pd.DataFrame,
    settings: pd.DataFrame,
    curves: pd.DataFrame,
    parameters: pd.DataFrame | None = None,
) -> Document:
    """Budget use per contender, best settings with importances, best curves, sizing."""
    blocks = [budget_table(summary), settings_table(settings), curve_table(summary, curves)]
    if parameters is not None and not parameters.empty:
        blocks.append(sizing_table(parameters))
    frames = {"tuning": summary, "tuning_settings": settings}
    return Document(title="Tuning", blocks=tuple(blocks), frames=frames, name="tuning")
