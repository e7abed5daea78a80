"""New-node arrival across seeds: what the inductive setting measured, per contender variant.

Each inductive run stores `extras.arrival` (harness.data.inductive.ArrivalReport): seconds
per new node of the local update and of a full recompute, and the largest difference between
their outputs. Here the times become milliseconds per new node with Student-t intervals over
seeds, the speed-up is the ratio of the mean full-recompute time to the mean update time, and
a largest difference above DIFFERENCE_LIMIT is flagged: the update then did not reproduce the
full recompute beyond rounding.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from harness.analysis.stats import interval_columns, with_variants

DIFFERENCE_LIMIT = 1e-5
COLUMNS = [
    "suite", "variant", "model", "seeds", "radius", "update_ms", "update_low", "update_high",
    "full_ms", "full_low", "full_high", "speed_up", "max_difference", "difference_flagged",
]  # fmt: skip


def arrival_summary(runs: pd.DataFrame, confidence: float = 0.95) -> pd.DataFrame:
    """One row per (suite, variant) whose runs measured arrival; empty when none did."""
    if runs.empty:
        return pd.DataFrame(columns=COLUMNS)
    runs = with_variants(runs)
    measured = runs[[isinstance(e, dict) and "arrival" in e for e in runs["extras"]]]
    rows = []
    for (suite, variant), group in measured.groupby(["suite", "variant"], sort=False):
        arrivals = [extras["arrival"] for extras in group["extras"]]
        update = 1000 * np.array([a["update_seconds_per_new_node"] for a in arrivals])
        full = 1000 * np.array([a["full_seconds_per_new_node"] for a in arrivals])
        largest = max(float(a["max_difference"]) for a in arrivals)
        rows.append(
            {
                "suite": suite,
                "variant": variant,
                "model": group["model"].iloc[0],
                "seeds": len(arrivals),
                "radius": int(arrivals[0]["radius"]),
                **interval_columns(update, confidence, "update", mean_name="update_ms"),
                **interval_columns(full, confidence, "full", mean_name="full_ms"),
                "speed_up": float(full.mean() / update.mean()) if update.mean() > 0 else np.nan,
                "max_difference": largest,
                "difference_flagged": largest > DIFFERENCE_LIMIT,
            }
        )
    return pd.DataFrame(rows, columns=COLUMNS)
