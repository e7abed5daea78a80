"""Verdicts on crafted run tables: clear gain, clear loss, tie within the minimum gain, noise."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats as scipy_stats

from harness.analysis.verdict import (
    BETTER,
    INCONCLUSIVE,
    NO_DIFFERENCE,
    WORSE,
    judge_all,
    seeds_to_settle,
)
from harness.api import analyse, comparisons, headline, with_reasons
from harness.schema.analysis import Analysis

SETTINGS = Analysis(minimum_gain=1.0, bootstrap_resamples=200)


def crafted(differences_in_points: list[float], suite: str = "crafted") -> pd.DataFrame:
    """An attention contender and a baseline whose per-seed gaps are the given points."""
    rng = np.random.default_rng(3)
    baseline = 0.70 + rng.uniform(-0.02, 0.02, size=len(differences_in_points))
    attention = baseline + np.asarray(differences_in_points) / 100
    rows = []
    for name, model, values in (("att", "gat", attention), ("conv", "gcn", baseline)):
        for seed, value in enumerate(values):
            rows.append(
                {
                    "suite": suite,
                    "contender": name,
                    "model": model,
                    "options": {"heads": 8} if model == "gat" else {},
                    "point": {},
                    "seed": seed,
                    "metric": "macro_f1",
                    "test_metric": float(value),
                    "seconds_per_epoch": 0.01,
                    "params": 100,
                    "peak_mb": 1.0,
                    "extras": {},
                }
            )
    return pd.DataFrame(rows)


CLEAR_GAIN = [3.0 + 0.1 * (-1) ** i for i in range(10)]
CLEAR_LOSS = [-3.0 + 0.1 * (-1) ** i for i in range(10)]
TIE = [0.1 + 0.2 * (-1) ** i for i in range(10)]
NOISY = [0.5, 6.0, -5.0, 4.0, -3.0]


@pytest.mark.parametrize(
    ("gaps", "expected"),
    [(CLEAR_GAIN, BETTER), (CLEAR_LOSS, WORSE), (TIE, NO_DIFFERENCE), (NOISY, INCONCLUSIVE)],
)
def test_verdict_of_crafted_tables(gaps, expected):
    row = with_reasons(comparisons(crafted(gaps), SETTINGS), SETTINGS).iloc[0]
    assert row["verdict"] == expected
    assert row["mean_difference"] == pytest.approx(np.mean(gaps))
    if expected == INCONCLUSIVE:
        assert row["seeds_needed"] > len(gaps)
        assert f"about {row['seeds_needed']} seeds" in row["reason"]
    else:
        assert pd.isna(row["seeds_needed"])


def test_headline_of_a_clear_gain():
    report = analyse(crafted(CLEAR_GAIN), SETTINGS)
    d = np.asarray(CLEAR_GAIN)
    half = scipy_stats.t.ppf(0.975, 9) * d.std(ddof=1) / math.sqrt(10)
    assert headline(report) == (
        f"att (gat, 8 heads) beats the best baseline, conv (gcn), by +3.0 macro-F1 points "
        f"(95% t-interval {3.0 - half:+.1f} to {3.0 + half:+.1f}, Holm-adjusted p < 0.001, "
        "10 seeds)."
    )


def test_headlines_of_loss_tie_and_noise():
    loss = headline(analyse(crafted(CLEAR_LOSS), SETTINGS))
    assert loss.startswith("att (gat, 8 heads) trails the best baseline, conv (gcn), by -3.0")
    tie = headline(analyse(crafted(TIE), SETTINGS))
    assert "no difference that matters at a minimum gain of 1 points" in tie
    noisy = headline(analyse(crafted(NOISY), SETTINGS))
    assert "inconclusive, +0.5 macro-F1 points" in noisy and "seeds would likely settle" in noisy


def test_significant_but_small_gain_is_no_difference_that_matters():
    """A gain of 0.3 points measured precisely is real but below the minimum gain of 1."""
    row = comparisons(crafted([0.3 + 0.01 * (-1) ** i for i in range(10)]), SETTINGS).iloc[0]
    assert row["p_t"] < 1e-6
    assert row["verdict"] == NO_DIFFERENCE


def test_holm_adjustment_can_leave_a_comparison_inconclusive():
    """Interval excludes 0 but the Holm-adjusted p-value is too large: inconclusive, said so."""
    table = comparisons(crafted([2.0, 1.0, 3.5, 0.4, 2.6]), SETTINGS)
    table = table.assign(p_t_holm=0.2)  # as if many other comparisons shared the family
    table = table.drop(columns=["verdict", "decided_by", "below_minimum_gain", "seeds_needed"])
    row = with_reasons(judge_all(table, SETTINGS), SETTINGS).iloc[0]
    assert row["t_low"] > 0
    assert row["verdict"] == INCONCLUSIVE
    assert "excludes 0 but Holm-adjusted p = 0.20" in row["reason"]


def test_seeds_to_settle_follows_its_formula():
    """n is the smallest n with t_{0.975, n-1} s / sqrt(n) below max(|d|, m - |d|)."""
    n = seeds_to_settle(mean_difference=0.5, std_difference=4.0, minimum_gain=1.0, confidence=0.95)
    target = 0.5  # max(0.5, 1 - 0.5)
    assert scipy_stats.t.ppf(0.975, n - 1) * 4.0 / math.sqrt(n) < target
    assert scipy_stats.t.ppf(0.975, n - 2) * 4.0 / math.sqrt(n - 1) >= target
    # more comparisons raise the bar for excluding 0 (Bonferroni bound of Holm)
    assert seeds_to_settle(2.0, 4.0, 1.0, 0.95, comparisons=10) > seeds_to_settle(
        2.0, 4.0, 1.0, 0.95, comparisons=1
    )
    assert seeds_to_settle(0.0, 1.0, 0.0, 0.95) is None


def test_no_comparison_without_a_baseline():
    runs = crafted(CLEAR_GAIN)
    report = analyse(runs[runs["contender"] == "att"], SETTINGS)
    assert report.comparisons.empty
    assert headline(report) == "No comparison: the suite has no baseline."


def test_too_few_shared_seeds_say_so():
    runs = crafted(CLEAR_GAIN)
    runs = runs[(runs["contender"] == "att") | (runs["seed"] == 0)]
    runs = runs[(runs["contender"] == "conv") | (runs["seed"] != 0)]  # no seed in common
    report = analyse(runs, SETTINGS)
    assert report.comparisons.iloc[0]["verdict"] == INCONCLUSIVE
    assert headline(report).endswith(
        "inconclusive, they share 0 seed(s); a paired comparison needs at least 2."
    )
