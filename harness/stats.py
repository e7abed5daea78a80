"""Analysis of stored runs: per-contender summaries over seeds."""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats as scipy_stats


def t_interval(values: np.ndarray, confidence: float = 0.95) -> tuple[float, float]:
    """Student-t interval for the mean; (nan, nan) with fewer than two values."""
    values = np.asarray(values, dtype=float)
    if len(values) < 2:
        return float("nan"), float("nan")
    mean = values.mean()
    half = scipy_stats.t.ppf((1 + confidence) / 2, len(values) - 1) * scipy_stats.sem(values)
    return float(mean - half), float(mean + half)


def summarise(runs: pd.DataFrame) -> pd.DataFrame:
    """One row per (suite, contender): test metric over seeds and mean costs."""
    rows = []
    for (suite, contender), group in runs.groupby(["suite", "contender"], sort=False):
        values = group["test_metric"].to_numpy(dtype=float)
        low, high = t_interval(values)
        rows.append(
            {
                "suite": suite,
                "contender": contender,
                "model": group["model"].iloc[0],
                "metric": group["metric"].iloc[0],
                "seeds": len(values),
                "mean": float(values.mean()),
                "std": float(values.std(ddof=1)) if len(values) > 1 else float("nan"),
                "ci_low": low,
                "ci_high": high,
                "seconds_per_epoch": float(group["seconds_per_epoch"].mean()),
                "params": int(group["params"].iloc[0]),
                "peak_mb": float(group["peak_mb"].max()),
            }
        )
    return pd.DataFrame(rows)
