"""Homophily map: the suite's contenders on synthetic graphs across a range of edge homophily.

Each synthetic graph (planned in harness/planning/) is a contextual stochastic block model
(harness/data/synthetic.py) matched
to the suite's data in nodes, average degree, number of classes and their balance, and feature
width; only the edge homophily moves. Where the suite's own data falls on that axis (its
measured edge homophily) tells a reviewer whether it sits where attention tends to help.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from harness.analysis.stats import t_interval
from harness.data.profile import DatasetProfile


@dataclass(frozen=True)
class HomophilyMapSummary:
    """Mean test metric per (level, contender), and where the suite's data falls."""

    table: pd.DataFrame  # columns: level, contender, mean, low, high, seeds
    metric: str
    data_edge_homophily: float
    nearest_level: float
    best_at_nearest: str


def summarise_map(runs: pd.DataFrame, profile: DatasetProfile, metric: str) -> HomophilyMapSummary:
    """Per-level means with Student-t intervals over the map's seeds."""
    rows = []
    levels = runs["point"].map(lambda point: point["edge_homophily"])
    for (level, contender), group in runs.groupby([levels, runs["contender"]], sort=True):
        values = group["test_metric"].to_numpy(dtype=float)
        low, high = t_interval(values)
        rows.append(
            {
                "level": float(level),
                "contender": contender,
                "mean": float(np.mean(values)),
                "low": low,
                "high": high,
                "seeds": len(values),
            }
        )
    table = pd.DataFrame(rows)
    measured = profile.homophily.edge
    all_levels = np.array(sorted(table["level"].unique()))
    nearest = float(all_levels[np.argmin(np.abs(all_levels - measured))])
    at_nearest = table[table["level"] == nearest]
    best = str(at_nearest.loc[at_nearest["mean"].idxmax(), "contender"])
    return HomophilyMapSummary(table, metric, measured, nearest, best)
