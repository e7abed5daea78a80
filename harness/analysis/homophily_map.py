"""Homophily map: the suite's contenders on synthetic graphs across a range of edge homophily.

Each synthetic graph is a contextual stochastic block model (harness/data/synthetic.py) matched
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
from harness.planning import RunSpec
from harness.schema.ablation import hop_cache_directory
from harness.schema.data import FractionSplit, SyntheticData
from harness.schema.suite import Suite


def map_suite_name(suite: Suite) -> str:
    """Map runs are stored under their own suite name, apart from the suite's own runs."""
    return f"{suite.name}:homophily_map"


def matched_section(profile: DatasetProfile, level: float, suite: Suite) -> SyntheticData:
    """A synthetic data section shaped like the profiled data, at edge homophily `level`."""
    options = suite.homophily_map
    counts = [count for count in profile.class_counts if count > 0]
    nodes = max(profile.nodes, 4)
    degree = min(max(profile.degrees.mean, 0.5), nodes - 2)
    return SyntheticData(
        source="synthetic",
        nodes=nodes,
        classes=len(counts),
        average_degree=round(degree, 3),
        edge_homophily=level,
        feature_dimension=min(profile.features.dimension, 10_000),
        feature_signal=options.feature_signal,
        class_balance=[float(count) for count in counts],
        graph_seed=options.graph_seed,
    )


def map_specs(suite: Suite, profile: DatasetProfile) -> list[RunSpec]:
    """Every contender (its own options, no ablation) at every level, for the map's seeds."""
    options = suite.homophily_map
    # a split column belongs to the user's data; synthetic graphs use the default fractions
    split = FractionSplit() if suite.split.method == "column" else suite.split
    hop_cache = hop_cache_directory(suite.hops)
    runs = []
    for level in options.levels:
        section = matched_section(profile, level, suite)
        for name, contender in suite.contenders.items():
            training = contender.training.apply(suite.training)
            for seed in range(options.seeds):
                runs.append(
                    RunSpec(
                        suite=map_suite_name(suite),
                        contender=name,
                        options=contender,
                        training=training,
                        data=section,
                        split=split,
                        metric=suite.metric,
                        seed=seed,
                        setting=suite.setting,
                        point={"edge_homophily": level},
                        hop_cache=hop_cache,
                    )
                )
    return runs


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
