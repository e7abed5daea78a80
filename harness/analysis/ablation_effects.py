"""Ablation effects: what each varied option of a contender does to the test metric.

For a contender run over a full grid of points, an axis's *marginal mean* at a level is the
mean test metric over every run at that level, averaging over the other axes. When the points
do not form a full grid (one axis at a time around a base point), each axis is read on the
slice where the other axes hold one setting: the one with the most levels of this axis (the
base point). Seeds pair the levels (same split, same initialisation), so intervals come from
per-seed values:

- level interval: t-interval over seeds of the per-seed level mean;
- marginal effect of a level: per seed, level mean minus the mean of that seed's level
  means; its t-interval over seeds (metric points);
- axis effect: per seed, the best level's mean minus the worst level's (levels ranked by
  their overall marginal mean); axes are ranked by its mean.

When the two strongest axes are fully crossed they also get a two-way table of cell means
and interaction residuals r_ab = y_ab - y_a. - y_.b + y_.. in points (Montgomery, Design
and Analysis of Experiments, ch. 5): zero everywhere means the axes' effects simply add.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from harness.analysis.stats import POINTS, interval_columns, t_interval


@dataclass(frozen=True)
class AblationEffects:
    """Per-level, per-axis and interaction tables (empty when no contender varies an axis)."""

    levels: pd.DataFrame
    axes: pd.DataFrame
    interactions: pd.DataFrame


def level_order(levels: list) -> list:
    """Numbers in numeric order, anything else by its text."""
    try:
        return sorted(levels, key=float)
    except (TypeError, ValueError):
        return sorted(levels, key=str)


def _grid(group: pd.DataFrame) -> pd.DataFrame:
    """One row per run with one column per axis (levels as text) and the metric."""
    frame = pd.DataFrame([{k: str(v) for k, v in p.items()} for p in group["point"]])
    frame.index = group.index
    frame["seed"] = group["seed"].to_numpy()
    frame["value"] = group["test_metric"].to_numpy(dtype=float)
    return frame


def _axis(grid: pd.DataFrame, axis: str, confidence: float) -> tuple[list[dict], dict]:
    per_seed = grid.groupby(["seed", axis])["value"].mean().unstack(axis)
    levels = level_order(list(per_seed.columns))
    per_seed = per_seed[levels]
    centred = POINTS * per_seed.sub(per_seed.mean(axis=1), axis=0)
    rows = []
    for level in levels:
        values = per_seed[level].dropna().to_numpy()
        effect = centred[level].dropna().to_numpy()
        rows.append(
            {
                "axis": axis,
                "level": level,
                "seeds": len(values),
                "runs": int((grid[axis] == level).sum()),
                **interval_columns(values, confidence, "t", mean_name="mean"),
                **interval_columns(effect, confidence, "effect"),
            }
        )
    means = per_seed.mean()
    best, worst = means.idxmax(), means.idxmin()
    spread = POINTS * (per_seed[best] - per_seed[worst]).dropna().to_numpy()
    low, high = t_interval(spread, confidence)
    summary = {
        "axis": axis,
        "levels": len(levels),
        "best_level": best,
        "worst_level": worst,
        "effect": float(spread.mean()),
        "effect_low": low,
        "effect_high": high,
        "seeds": len(spread),
    }
    return rows, summary


def _slice(grid: pd.DataFrame, axis: str, varied: list[str]) -> pd.DataFrame:
    """All runs on a full grid; otherwise the runs where the other axes hold the setting that
    covers the most levels of `axis`."""
    others = [a for a in varied if a != axis]
    settings = grid[varied].drop_duplicates()
    if not others or len(settings) == np.prod([grid[a].nunique() for a in varied]):
        return grid
    coverage = grid.groupby(others)[axis].agg(["nunique", "size"])
    base = coverage.sort_values(["nunique", "size"], ascending=False).index[0]
    base = base if isinstance(base, tuple) else (base,)
    return grid[np.all([grid[a] == level for a, level in zip(others, base, strict=True)], axis=0)]


def _interaction(grid: pd.DataFrame, first: str, second: str) -> list[dict]:
    cells = grid.groupby([first, second])["value"].agg(["mean", "count"])
    table = cells["mean"].unstack(second)
    if table.isna().to_numpy().any() or min(table.shape) < 2:
        return []  # not fully crossed: residuals would mix effects with missing cells
    table = table.loc[level_order(list(table.index)), level_order(list(table.columns))]
    residual = (
        table.sub(table.mean(axis=1), axis=0).sub(table.mean(axis=0), axis=1)
        + np.nanmean(table.to_numpy())
    ) * POINTS
    rows = []
    for level_a in table.index:
        for level_b in table.columns:
            if pd.isna(table.loc[level_a, level_b]):
                continue
            rows.append(
                {
                    "axis_a": first,
                    "level_a": level_a,
                    "axis_b": second,
                    "level_b": level_b,
                    "mean": float(table.loc[level_a, level_b]),
                    "runs": int(cells.loc[(level_a, level_b), "count"]),
                    "interaction": float(residual.loc[level_a, level_b]),
                }
            )
    return rows


def ablation_effects(runs: pd.DataFrame, confidence: float = 0.95) -> AblationEffects:
    """Effects of every axis varied by a contender (columns suite and contender label them)."""
    level_rows, axis_rows, interaction_rows = [], [], []
    with_points = runs[runs["point"].map(bool)]
    for (suite, contender), group in with_points.groupby(["suite", "contender"], sort=False):
        grid = _grid(group)
        varied = [a for a in grid.columns if a not in ("seed", "value") and grid[a].nunique() > 1]
        summaries = []
        for axis in varied:
            rows, summary = _axis(
                _slice(grid, axis, varied).dropna(subset=[axis]), axis, confidence
            )
            level_rows += [{"suite": suite, "contender": contender} | r for r in rows]
            summaries.append({"suite": suite, "contender": contender} | summary)
        summaries.sort(key=lambda s: -abs(s["effect"]))
        for rank, summary in enumerate(summaries, start=1):
            axis_rows.append(summary | {"rank": rank})
        if len(summaries) >= 2:
            first, second = summaries[0]["axis"], summaries[1]["axis"]
            pairs = _interaction(grid.dropna(subset=[first, second]), first, second)
            interaction_rows += [{"suite": suite, "contender": contender} | r for r in pairs]
    return AblationEffects(
        pd.DataFrame(level_rows), pd.DataFrame(axis_rows), pd.DataFrame(interaction_rows)
    )
