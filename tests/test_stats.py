"""Per-variant summaries, intervals, pairing on shared seeds, sides of the comparison."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats as scipy_stats

from harness.analysis.stats import (
    attention_side,
    bootstrap_interval,
    describe,
    holm,
    paired_comparisons,
    summarise,
    with_variants,
)
from harness.schema.analysis import Analysis

SETTINGS = Analysis(bootstrap_resamples=500)


def run(contender, model, seed, value, point=None, suite="s", **costs):
    return {
        "suite": suite,
        "contender": contender,
        "model": model,
        "options": {"heads": 2} if model in ("gat", "gatv2") else {},
        "point": point or {},
        "seed": seed,
        "metric": "accuracy",
        "test_metric": value,
        "seconds_per_epoch": costs.get("seconds", 0.01),
        "params": costs.get("params", 100),
        "peak_mb": costs.get("memory", 1.0),
        "extras": {},
    }


VALUES = [0.61, 0.64, 0.58, 0.70, 0.66]


def test_describe_matches_numpy_and_the_t_formula():
    runs = pd.DataFrame([run("att", "gat", s, v) for s, v in enumerate(VALUES)])
    row = describe(runs, SETTINGS).iloc[0]
    values = np.array(VALUES)
    assert row["seeds"] == 5
    assert row["mean"] == pytest.approx(values.mean())
    assert row["std"] == pytest.approx(values.std(ddof=1))
    assert row["median"] == pytest.approx(0.64)
    assert (row["min"], row["max"]) == (0.58, 0.70)
    half = scipy_stats.t.ppf(0.975, 4) * values.std(ddof=1) / np.sqrt(5)
    assert (row["t_low"], row["t_high"]) == pytest.approx(
        (values.mean() - half, values.mean() + half)
    )
    assert row["bootstrap_low"] < values.mean() < row["bootstrap_high"]
    assert values.min() <= row["bootstrap_low"] and row["bootstrap_high"] <= values.max()
    assert row["side"] == "attention" and row["heads"] == 2


def test_bootstrap_interval_is_reproducible_and_handles_degenerate_inputs():
    first = bootstrap_interval(np.array(VALUES), 0.95, 500)
    assert first == bootstrap_interval(np.array(VALUES), 0.95, 500)
    # runs are stored in the order they finish (--jobs 2 differs from --jobs 1): same interval
    assert first == bootstrap_interval(np.array(VALUES[::-1]), 0.95, 500)
    assert bootstrap_interval(np.array([0.5, 0.5, 0.5]), 0.95, 500) == (0.5, 0.5)
    assert all(np.isnan(bootstrap_interval(np.array([0.5]), 0.95, 500)))


def test_holm_by_hand_and_with_missing_values():
    """p = (0.01, 0.04, 0.03): sorted 0.01*3, 0.03*2, 0.04*1 -> 0.03, 0.06, 0.06 (monotone)."""
    assert holm(np.array([0.01, 0.04, 0.03])) == pytest.approx([0.03, 0.06, 0.06])
    adjusted = holm(np.array([0.02, np.nan, 0.5]))
    assert np.isnan(adjusted[1])
    assert adjusted[[0, 2]] == pytest.approx([0.04, 0.5])


def test_pairs_use_only_shared_seeds():
    rows = [run("att", "gat", s, 0.7 + 0.01 * s) for s in range(5)]
    rows += [run("conv", "gcn", s, 0.69 + 0.01 * s) for s in (0, 1, 2, 4, 7)]
    table = paired_comparisons(pd.DataFrame(rows), SETTINGS)
    assert len(table) == 1
    row = table.iloc[0]
    assert row["seeds"] == 4  # seeds 0, 1, 2, 4
    assert row["mean_difference"] == pytest.approx(1.0)
    assert row["std_difference"] == pytest.approx(0.0, abs=1e-9)


def test_identical_contenders_give_p_one_and_zero_effect():
    rows = [run("att", "gat", s, v) for s, v in enumerate(VALUES)]
    rows += [run("conv", "gcn", s, v) for s, v in enumerate(VALUES)]
    row = paired_comparisons(pd.DataFrame(rows), SETTINGS).iloc[0]
    assert (row["p_t"], row["p_wilcoxon"], row["effect_size"]) == (1.0, 1.0, 0.0)


def test_sides_by_model_kind_or_by_the_analysis_table():
    rows = [run("att", "gat", 0, 0.7), run("conv", "gcn", 0, 0.6), run("mean", "sage", 0, 0.6)]
    runs = pd.DataFrame(rows)
    assert list(attention_side(runs, Analysis())) == [True, False, False]
    assert list(attention_side(runs, Analysis(attention=["conv"]))) == [False, True, False]
    assert list(attention_side(runs, Analysis(baselines=["mean"]))) == [True, True, False]


def test_ablation_points_become_variants_and_restored_runs_count_once():
    rows = [run("att", "gat", 0, 0.7, {"heads": 1}), run("att", "gat", 0, 0.8, {"heads": 4})]
    rows.append(run("att", "gat", 0, 0.9, {"heads": 4}))  # stored again later: the latest counts
    variants = with_variants(pd.DataFrame(rows))
    assert list(variants["variant"]) == ["att[heads=1]", "att[heads=4]"]
    assert list(variants["test_metric"]) == [0.7, 0.9]


def test_summarise_keeps_its_columns_for_the_terminal_table():
    runs = pd.DataFrame([run("att", "gat", s, v) for s, v in enumerate(VALUES)])
    summary = summarise(runs)
    assert list(summary.columns) == [
        "suite", "contender", "model", "metric", "seeds", "mean", "std", "ci_low", "ci_high",
        "ci_clipped", "confidence", "seconds_per_epoch", "params", "peak_mb", "warnings",
    ]  # fmt: skip
    assert summary["mean"].iloc[0] == pytest.approx(np.mean(VALUES))
    assert summary["confidence"].iloc[0] == 0.95
    narrower = summarise(runs, 0.8).iloc[0]
    assert summary["ci_low"].iloc[0] < narrower["ci_low"] < narrower["ci_high"]


def test_undefined_metric_values_are_left_out():
    """ROC-AUC can be undefined on a split (NaN); the other seeds still count."""
    rows = [run("att", "gat", s, v) for s, v in enumerate([0.7, float("nan"), 0.8])]
    rows += [run("conv", "gcn", s, 0.6) for s in range(3)]
    runs = pd.DataFrame(rows)
    row = describe(runs, SETTINGS).iloc[0]
    assert row["seeds"] == 2 and row["mean"] == pytest.approx(0.75)
    assert paired_comparisons(runs, SETTINGS).iloc[0]["seeds"] == 2
