"""Ablation effects on crafted grids with known additive effects and interactions."""

from __future__ import annotations

import itertools

import pandas as pd
import pytest

from harness.analysis.ablation_effects import ablation_effects, level_order

HEADS = {1: 0.00, 4: 0.02, 8: 0.03}  # metric added by each level
HOPS = {1: 0.00, 2: -0.05}
SEED_SHIFT = [0.0, 0.01, -0.01, 0.005]


def grid_runs(interaction: float = 0.0, full: bool = True) -> pd.DataFrame:
    """Metric = 0.7 + heads effect + hops effect + seed shift (+ interaction at heads 8, hops 2)."""
    points = list(itertools.product(HEADS, HOPS))
    if not full:  # one axis at a time around heads 4, hops 1
        points = [(4, 1), (1, 1), (8, 1), (4, 2)]
    rows = []
    for seed, shift in enumerate(SEED_SHIFT):
        for heads, hops in points:
            value = 0.7 + HEADS[heads] + HOPS[hops] + shift
            value += interaction if (heads, hops) == (8, 2) else 0.0
            rows.append(
                {
                    "suite": "s",
                    "contender": "att",
                    "point": {"heads": heads, "hop_radius": hops},
                    "seed": seed,
                    "test_metric": value,
                }
            )
    rows.append({"suite": "s", "contender": "conv", "point": {}, "seed": 0, "test_metric": 0.6})
    return pd.DataFrame(rows)


def test_additive_grid_recovers_effects_and_ranks_axes():
    effects = ablation_effects(grid_runs())
    axes = effects.axes.set_index("axis")
    # hop radius moves the metric by 5 points, heads by 3: hop radius ranks first
    assert axes.loc["hop_radius", "rank"] == 1 and axes.loc["heads", "rank"] == 2
    assert axes.loc["hop_radius", "effect"] == pytest.approx(5.0)
    assert axes.loc["heads", "effect"] == pytest.approx(3.0)
    assert axes.loc["heads", "best_level"] == "8" and axes.loc["heads", "worst_level"] == "1"
    levels = effects.levels.set_index(["axis", "level"])
    # marginal effect of heads = 8: 3 points minus the mean of (0, 2, 3) points
    assert levels.loc[("heads", "8"), "effect"] == pytest.approx(3 - 5 / 3)
    assert levels.loc[("heads", "4"), "mean"] == pytest.approx(0.7 + 0.02 - 0.025 + 0.00125)
    assert levels.loc[("heads", "4"), "seeds"] == 4
    assert (effects.interactions["interaction"].abs() < 1e-9).all()
    assert set(effects.levels["contender"]) == {"att"}  # no grid, no effects for conv


def test_interaction_residuals_show_a_non_additive_cell():
    effects = ablation_effects(grid_runs(interaction=0.06))
    cells = effects.interactions.set_index(["level_a", "level_b"])
    first = effects.interactions["axis_a"].iloc[0]
    key = ("2", "8") if first == "hop_radius" else ("8", "2")
    # residual of the 2x3 table at the bumped cell: 6 * (1 - 1/2) * (1 - 1/3) = 2 points
    assert cells.loc[key, "interaction"] == pytest.approx(2.0)
    assert cells["interaction"].sum() == pytest.approx(0.0, abs=1e-9)


def test_one_axis_at_a_time_reads_each_axis_at_the_base_point():
    effects = ablation_effects(grid_runs(full=False))
    axes = effects.axes.set_index("axis")
    assert axes.loc["heads", "effect"] == pytest.approx(3.0)
    assert axes.loc["hop_radius", "effect"] == pytest.approx(5.0)
    assert effects.interactions.empty  # not crossed


def test_levels_sort_numerically_when_they_can():
    assert level_order(["8", "1", "16"]) == ["1", "8", "16"]
    assert level_order(["mean", "concat"]) == ["concat", "mean"]
