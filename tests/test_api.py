"""The notebook API returns the same analyses as the report, as pandas DataFrames."""

from __future__ import annotations

import pandas as pd
import pytest

from harness import api
from harness.schema.analysis import Analysis

SETTINGS = Analysis(bootstrap_resamples=200, minimum_gain=0.5)


def crafted_runs() -> pd.DataFrame:
    rows = []
    for seed in range(4):
        for heads, gain in ((1, 0.00), (4, 0.02)):
            rows.append(("att", "gat", {"heads": heads}, seed, 0.70 + gain + 0.003 * seed))
        rows.append(("conv", "gcn", {}, seed, 0.698 + 0.003 * seed + 0.001 * (seed % 2)))
    return pd.DataFrame(
        [
            {"suite": "notebook", "contender": c, "model": m, "options": {"heads": 2}}
            | {"point": p, "seed": s, "metric": "accuracy", "test_metric": v}
            | {"seconds_per_epoch": 0.01, "params": 10, "peak_mb": 1.0, "extras": {}}
            for c, m, p, s, v in rows
        ]
    )


def test_every_function_returns_the_report_s_frames():
    runs = crafted_runs()
    report = api.analyse(runs, SETTINGS)
    pd.testing.assert_frame_equal(api.contenders(runs, SETTINGS), report.contenders)
    pd.testing.assert_frame_equal(api.comparisons(runs, SETTINGS), report.comparisons)
    pd.testing.assert_frame_equal(api.cost(runs, SETTINGS), report.cost)
    pd.testing.assert_frame_equal(api.ablation(runs, SETTINGS).axes, report.ablation.axes)
    assert list(report.contenders["variant"]) == ["att[heads=1]", "att[heads=4]", "conv"]
    assert list(report.comparisons["verdict"]) == ["no difference that matters", "better"]
    assert report.ablation.axes.iloc[0]["effect"] == pytest.approx(2.0)
    assert report.attention.empty and report.homophily.empty and report.homophily_map is None


def test_analyse_each_splits_suites():
    runs = pd.concat([crafted_runs(), crafted_runs().assign(suite="other")])
    reports = api.analyse_each(runs, SETTINGS)
    assert [r.suite for r in reports] == ["notebook", "other"]
