"""Attention diagnostics of stored runs, per ablation variant and per axis level.

Reads the per-run diagnostics of `extras["attention"]["mean"]` (see
harness.training.diagnostics) and averages them over runs. Per axis level, runs are pooled as
in harness.analysis.ablation_effects: every
run on a full grid; otherwise (one axis at a time) the runs whose other axes hold their most
common level, which is the base point's.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from harness.analysis.ablation_effects import ablation_effects
from harness.schema.ablation import point_label
from harness.schema.tasks import DEFAULT_TASK, TASKS
from harness.training.diagnostics import MEASURES


def label_points(runs: pd.DataFrame) -> pd.DataFrame:
    """Runs whose `contender` column names the variant, e.g. `attention[heads=4]`."""
    labels = [point_label(c, p) for c, p in zip(runs["contender"], runs["point"], strict=True)]
    return runs.assign(contender=labels)


def _measures(runs: pd.DataFrame) -> pd.DataFrame:
    rows = []
    for extras in runs["extras"]:
        attention = extras.get("attention") if isinstance(extras, dict) else None
        mean = attention.get("mean", {}) if isinstance(attention, dict) else {}
        rows.append({name: mean.get(name) for name in MEASURES})
    return pd.DataFrame(rows, index=runs.index, columns=list(MEASURES), dtype=float)


def attention_by_variant(runs: pd.DataFrame) -> pd.DataFrame:
    """Mean of each diagnostic over the seeds of every variant that has diagnostics."""
    labelled = label_points(runs)
    measures = _measures(labelled)
    measures["suite"], measures["variant"] = labelled["suite"], labelled["contender"]
    measures = measures.dropna(subset=list(MEASURES), how="all")
    if measures.empty:
        return pd.DataFrame(columns=["suite", "variant", "runs", *MEASURES])
    grouped = measures.groupby(["suite", "variant"], sort=False)
    out = grouped[list(MEASURES)].mean()
    out.insert(0, "runs", grouped.size())
    return out.reset_index()


def _on_slice(grid: pd.DataFrame, axis: str) -> pd.DataFrame:
    others = [a for a in grid.columns if a != axis]
    full = len(grid.drop_duplicates()) == np.prod([grid[a].nunique() for a in grid.columns])
    if full or not others:
        return grid
    keep = np.all([grid[a] == grid[a].mode().iloc[0] for a in others], axis=0)
    return grid[keep]


def attention_by_level(runs: pd.DataFrame) -> pd.DataFrame:
    """Mean diagnostics per (suite, contender, axis, level); levels as text."""
    rows = []
    with_points = runs[runs["point"].map(bool)]
    for (suite, contender), group in with_points.groupby(["suite", "contender"], sort=False):
        grid = pd.DataFrame([{k: str(v) for k, v in p.items()} for p in group["point"]])
        grid.index = group.index
        measures = _measures(group)
        varied = [a for a in grid.columns if grid[a].nunique() > 1]
        for axis in varied:
            part = _on_slice(grid[varied], axis)
            for level, members in part.groupby(axis, sort=False):
                values = measures.loc[members.index].mean()
                rows.append(
                    {"suite": suite, "contender": contender, "axis": axis, "level": level}
                    | {name: float(values[name]) for name in MEASURES}
                )
    return pd.DataFrame(rows, columns=["suite", "contender", "axis", "level", *MEASURES])


@dataclass(frozen=True)
class AblationView:
    """What the terminal shows about ablations and attention, computed once."""

    metric: str
    levels: pd.DataFrame  # harness.analysis.ablation_effects level rows
    attention_levels: pd.DataFrame  # attention_by_level
    attention_variants: pd.DataFrame  # attention_by_variant
    confidence: float = 0.95  # of the level and effect intervals


def ablation_view(runs: pd.DataFrame, confidence: float = 0.95) -> AblationView:
    """Per-axis effects (analysis.ablation_effects, intervals at `confidence`) and attention
    diagnostics of stored runs."""
    metric = str(runs["metric"].iloc[0]) if not runs.empty else TASKS[DEFAULT_TASK].default_metric
    levels = ablation_effects(runs, confidence).levels if not runs.empty else pd.DataFrame()
    return AblationView(
        metric, levels, attention_by_level(runs), attention_by_variant(runs), confidence
    )
