"""Cost trade-off: test metric against seconds per epoch, parameters and peak memory.

A variant is Pareto-optimal when no other variant is at least as good on the metric and at
least as cheap on every cost considered, and strictly better on one of them (Pareto
dominance, as in multi-objective optimisation; e.g. Deb, 2001, ch. 2).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

COSTS = {"seconds": "seconds_per_epoch", "params": "params", "memory": "peak_mb"}


def pareto_optimal(metric: np.ndarray, costs: np.ndarray) -> np.ndarray:
    """Boolean mask of the non-dominated rows (metric maximised, every cost column minimised)."""
    metric = np.asarray(metric, dtype=float)
    costs = np.asarray(costs, dtype=float).reshape(len(metric), -1)
    optimal = np.ones(len(metric), dtype=bool)
    for i in range(len(metric)):
        no_worse = (metric >= metric[i]) & np.all(costs <= costs[i], axis=1)
        strictly = (metric > metric[i]) | np.any(costs < costs[i], axis=1)
        optimal[i] = not np.any(no_worse & strictly)
    return optimal


def cost_tradeoff(contenders: pd.DataFrame) -> pd.DataFrame:
    """Per variant of stats.describe: metric, costs and Pareto marks.

    `pareto` uses all three costs at once; `pareto_seconds`, `pareto_params` and
    `pareto_memory` use the metric and one cost each (the fronts drawn in the plots).
    """
    columns = ["suite", "variant", "model", "side", "metric", "mean", *COSTS.values()]
    frames = []
    for _, group in contenders.groupby("suite", sort=False):
        frame = group[columns].reset_index(drop=True)
        metric = frame["mean"].to_numpy()
        frame["pareto"] = pareto_optimal(metric, frame[list(COSTS.values())].to_numpy())
        for name, column in COSTS.items():
            frame[f"pareto_{name}"] = pareto_optimal(metric, frame[column].to_numpy())
        frames.append(frame)
    return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame(columns=columns)
