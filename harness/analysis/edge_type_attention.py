"""Which edge types attention listens to, from stored runs: the share of attention each edge
type receives against its share of edges (harness.training.edge_type_shares), per variant,
layer, head and type, averaged over seeds."""

from __future__ import annotations

import pandas as pd

from harness.analysis.axes import label_points

COLUMNS = ["suite", "variant", "layer", "head", "edge_type", "attention_share", "edge_share"]


def edge_type_attention(runs: pd.DataFrame) -> pd.DataFrame:
    """One row per (suite, variant, layer, head, edge type), means over seeds, with `ratio`
    attention share over edge share; empty when no run stored edge-type diagnostics."""
    labelled = label_points(runs)
    rows = []
    for suite, variant, extras in zip(
        labelled["suite"], labelled["contender"], labelled["extras"], strict=True
    ):
        attention = extras.get("attention") if isinstance(extras, dict) else None
        typed = attention.get("edge_types") if isinstance(attention, dict) else None
        if not typed:
            continue
        for record in typed["heads"]:
            for name, share, edges in zip(
                typed["names"], record["attention_share"], record["edge_share"], strict=True
            ):
                rows.append([suite, variant, record["layer"], record["head"], name, share, edges])
    if not rows:
        return pd.DataFrame(columns=[*COLUMNS, "ratio"])
    frame = pd.DataFrame(rows, columns=COLUMNS)
    keys = COLUMNS[:5]
    means = frame.groupby(keys, sort=False)[["attention_share", "edge_share"]].mean()
    means["ratio"] = means["attention_share"] / means["edge_share"].where(means["edge_share"] > 0)
    return means.reset_index()
