"""Pareto marks of the cost trade-off."""

from __future__ import annotations

import numpy as np
import pandas as pd

from harness.analysis.cost import cost_tradeoff, pareto_optimal


def test_pareto_front_by_hand():
    metric = np.array([0.80, 0.78, 0.70, 0.79, 0.70])
    seconds = np.array([[3.0], [1.0], [0.5], [3.5], [0.6]])
    # 0.79 at 3.5 s is beaten by 0.80 at 3.0 s; 0.70 at 0.6 s by 0.70 at 0.5 s
    assert list(pareto_optimal(metric, seconds)) == [True, True, True, False, False]


def test_equal_rows_do_not_dominate_each_other():
    assert list(pareto_optimal(np.array([0.5, 0.5]), np.array([[1.0], [1.0]]))) == [True, True]


def test_cost_tradeoff_marks_each_cost_and_all_at_once():
    contenders = pd.DataFrame(
        {
            "suite": "s",
            "variant": ["att", "conv", "mlp"],
            "model": ["gat", "gcn", "mlp"],
            "side": ["attention", "baseline", "baseline"],
            "metric": "accuracy",
            "mean": [0.80, 0.78, 0.60],
            "seconds_per_epoch": [0.05, 0.01, 0.02],
            "params": [500, 900, 300],
            "peak_mb": [4.0, 1.0, 0.5],
        }
    )
    table = cost_tradeoff(contenders).set_index("variant")
    assert list(table["pareto_seconds"]) == [True, True, False]
    assert list(table["pareto_params"]) == [True, False, True]
    assert list(table["pareto_memory"]) == [True, True, True]
    assert list(table["pareto"]) == [True, True, True]
