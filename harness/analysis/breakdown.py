"""Per-node breakdown: every contender and comparison within groups of test nodes.

For each grouping (degree, local homophily) and group, the suite's metric is computed per run
from its stored test-node probabilities restricted to the group's nodes. Per group and
variant: mean over seeds with a t-interval. Per group and comparison: the paired difference
over seeds (attention minus baseline, metric points), judged by the suite-level rule
(analysis/verdict.py) with Holm's adjustment over every group and comparison at once.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import pandas as pd
from torch_geometric.data import Data

from harness.analysis.bounds import within_range
from harness.analysis.node_groups import NodeGroups, node_groups
from harness.analysis.stats import (
    METRIC_RANGE,
    POINTS,
    attention_side,
    holm,
    paired_test,
    t_interval,
)
from harness.analysis.verdict import judge_all
from harness.data.collection import GraphCollection
from harness.results import NodePredictions
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis
from harness.training.metrics import score_probabilities

COLUMNS = ["grouping", "group", "nodes", "attention", "baseline", "difference", "low", "high"]


@dataclass(frozen=True)
class Breakdown:
    """Per-group metrics (`groups`) and per-group comparisons (`comparisons`, the columns of
    csv/breakdown.csv first); `attention` and `baseline` name the headline comparison's sides
    (None without a comparison)."""

    groups: pd.DataFrame
    comparisons: pd.DataFrame
    attention: str | None = None
    baseline: str | None = None
    unit: str = "node"  # what the groups hold: test nodes, or test graphs of a collection

    def headline_rows(self) -> pd.DataFrame:
        """The rows of the headline comparison, lowest group first within each grouping."""
        rows = self.comparisons
        return rows[(rows["attention"] == self.attention) & (rows["baseline"] == self.baseline)]


def group_scores(
    runs: pd.DataFrame,
    predictions: Mapping[str, NodePredictions],
    data: Data,
    groups: list[NodeGroups],
) -> pd.DataFrame:
    """One row per run and non-empty group: the run's metric on the group's test nodes."""
    labels = data.y.numpy()
    classes = int(labels.max()) + 1
    rows = []
    for run in runs.itertuples(index=False):
        stored = predictions.get(run.key)
        if stored is None:
            continue
        truth = labels[stored.nodes]
        for grouping in groups:
            members = grouping.of_node[stored.nodes]
            for index, name in enumerate(grouping.labels):
                chosen = members == index
                if not chosen.any():
                    continue
                value = score_probabilities(
                    run.metric, stored.probabilities[chosen], truth[chosen], classes
                )
                rows.append(
                    {
                        "grouping": grouping.grouping,
                        "order": index,
                        "group": name,
                        "variant": run.variant,
                        "attention_side": run.attention_side,
                        "seed": run.seed,
                        "nodes": int(chosen.sum()),
                        "value": value,
                    }
                )
    return pd.DataFrame(rows)


def per_group(scores: pd.DataFrame, confidence: float) -> pd.DataFrame:
    """Per grouping, group and variant: the metric over seeds with its t-interval, clipped to
    the metric's range like every other interval (analysis.bounds; `clipped` says so)."""
    rows = []
    keys = ["grouping", "order", "group", "variant"]
    for (grouping, order, group, variant), chosen in scores.groupby(keys, sort=True):
        values = chosen["value"].dropna().to_numpy(dtype=float)
        mean = float(values.mean()) if len(values) else float("nan")
        spread = float(values.std(ddof=1)) if len(values) > 1 else float("nan")
        interval = t_interval(values, confidence)
        bounded = within_range(mean, spread, interval, METRIC_RANGE, confidence)
        rows.append(
            {
                "grouping": grouping,
                "order": order,
                "group": group,
                "variant": variant,
                "nodes": float(chosen["nodes"].mean()),
                "seeds": len(values),
                "mean": mean,
                "low": bounded.low,
                "high": bounded.high,
                "clipped": bounded.clipped,
            }
        )
    return pd.DataFrame(rows)


def per_group_comparisons(scores: pd.DataFrame, settings: Analysis) -> pd.DataFrame:
    """Paired differences per group and comparison, judged, Holm over all of them."""
    sides = scores.drop_duplicates("variant").set_index("variant")["attention_side"]
    attention = [variant for variant, is_attention in sides.items() if is_attention]
    baselines = [variant for variant, is_attention in sides.items() if not is_attention]
    rows = []
    for (grouping, order, group), chosen in scores.groupby(["grouping", "order", "group"]):
        table = chosen.pivot(index="seed", columns="variant", values="value")
        nodes = chosen.groupby("seed")["nodes"].first().mean()
        for a in [v for v in attention if v in table]:
            for b in [v for v in baselines if v in table]:
                both = table[[a, b]].dropna()
                differences = POINTS * (both[a] - both[b]).to_numpy()
                rows.append(
                    {"suite": "", "grouping": grouping, "group": group, "nodes": float(nodes)}
                    | {"attention": a, "baseline": b, "order": order}
                    | paired_test(differences, settings)
                )
    frame = pd.DataFrame(rows)
    if frame.empty:
        return pd.DataFrame(columns=[*COLUMNS, "seeds", "p_t_holm", "verdict"])
    frame["p_t_holm"] = holm(frame["p_t"].to_numpy())
    judged = judge_all(frame, settings)  # one family: every group and comparison
    judged = judged.rename(columns={"mean_difference": "difference", "t_low": "low"})
    judged = judged.rename(columns={"t_high": "high"})
    judged = judged.sort_values(["attention", "baseline", "grouping", "order"], kind="stable")
    rest = ["seeds", "std_difference", "p_t", "p_t_holm", "effect_size", "verdict"]
    rest += ["decided_by", "below_minimum_gain", "seeds_needed"]
    return judged[COLUMNS + rest].reset_index(drop=True)


def breakdown(
    runs: pd.DataFrame,
    predictions: Mapping[str, NodePredictions],
    data: Data,
    settings: Analysis = DEFAULT_ANALYSIS,
    headline: tuple[str, str] | None = None,
) -> Breakdown:
    """The per-node breakdown of one suite's runs (with a `variant` column, as
    stats.with_variants gives) on its input graph; `headline` names the headline comparison
    (default: the first attention variant against the first baseline)."""
    runs = runs.assign(attention_side=attention_side(runs, settings).to_numpy())
    scores = group_scores(runs, predictions, data, node_groups(data, settings))
    unit = "graph" if isinstance(data, GraphCollection) else "node"
    if scores.empty:
        empty = pd.DataFrame(columns=COLUMNS)
        return Breakdown(empty, empty, unit=unit)
    judged = per_group_comparisons(scores, settings)
    groups = per_group(scores, settings.confidence)
    if judged.empty:
        return Breakdown(groups, judged, unit=unit)
    attention, baseline = headline or (judged["attention"].iloc[0], judged["baseline"].iloc[0])
    return Breakdown(groups, judged, attention, baseline, unit)
