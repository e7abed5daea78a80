"""Paired statistics against outside references.

- Student (1908), "The probable error of a mean", Biometrika 6: the paired sleep data as
  reproduced in R's `sleep` data set (extra hours of sleep for ten patients under two drugs).
  R's documented example `t.test(extra ~ group, data = sleep, paired = TRUE)` prints
  t = -4.0621, df = 9, p-value = 0.002833, 95 percent confidence interval -2.4598858
  -0.7001142, mean difference -1.58 (values from memory of R's documented output; this test
  measures t = -4.0621, df = 9, p = 0.0028329 and -2.45989 to -0.70011, which agree).
- scipy.stats.ttest_rel and scipy.stats.wilcoxon: the paired tests of
  harness.analysis.stats.paired_comparisons must equal them on the same data.
- statsmodels.stats.multitest.multipletests(method="holm"): Holm (1979) step-down adjustment.
- Cohen (1988), Statistical Power Analysis, d_z = mean(d) / sd(d) for paired data.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats as scipy_stats
from statsmodels.stats.multitest import multipletests

from harness.analysis.stats import holm, paired_comparisons, paired_test
from harness.schema.analysis import Analysis

DRUG_1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
DRUG_2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]


def test_sleep_data_paired_t_test_matches_r_documented_output():
    """Student's sleep data: drug 1 minus drug 2 (value from memory of R's output)."""
    differences = np.array(DRUG_1) - np.array(DRUG_2)
    result = paired_test(differences)
    assert result["seeds"] == 10
    assert result["df"] == 9
    assert result["mean_difference"] == pytest.approx(-1.58)
    assert result["t_statistic"] == pytest.approx(-4.0621, abs=5e-5)
    assert result["p_t"] == pytest.approx(0.002833, abs=5e-7)
    assert result["t_low"] == pytest.approx(-2.4598858, abs=5e-7)
    assert result["t_high"] == pytest.approx(-0.7001142, abs=5e-7)


def _paired_runs(first: list[float], second: list[float]) -> pd.DataFrame:
    rows = []
    for name, model, values in (("a", "gat", first), ("b", "gcn", second)):
        for seed, value in enumerate(values):
            rows.append(
                {
                    "suite": "reference",
                    "contender": name,
                    "model": model,
                    "options": {},
                    "point": {},
                    "seed": seed,
                    "test_metric": value,
                }
            )
    return pd.DataFrame(rows)


@pytest.mark.parametrize("draw", range(3))
def test_paired_comparison_equals_scipy(draw: int):
    """paired t-test and Wilcoxon signed-rank p-values and statistics equal scipy's."""
    rng = np.random.default_rng(draw)
    baseline = rng.uniform(0.6, 0.8, size=9)
    attention = baseline + rng.normal(0.01, 0.02, size=9)
    row = paired_comparisons(_paired_runs(list(attention), list(baseline))).iloc[0]
    differences = 100 * (attention - baseline)
    t_reference = scipy_stats.ttest_rel(100 * attention, 100 * baseline)
    w_reference = scipy_stats.wilcoxon(100 * attention, 100 * baseline)
    assert row["t_statistic"] == pytest.approx(t_reference.statistic, rel=1e-9)
    assert row["p_t"] == pytest.approx(t_reference.pvalue, rel=1e-9)
    assert row["wilcoxon_statistic"] == pytest.approx(w_reference.statistic)
    assert row["p_wilcoxon"] == pytest.approx(w_reference.pvalue, rel=1e-9)
    low, high = t_reference.confidence_interval(0.95)
    assert (row["t_low"], row["t_high"]) == pytest.approx((low, high), rel=1e-9)
    assert row["effect_size"] == pytest.approx(differences.mean() / differences.std(ddof=1))


def test_holm_equals_statsmodels_on_random_inputs():
    """Holm-adjusted p-values equal statsmodels' multipletests(method="holm").

    Few calls: multipletests runs a full garbage collection each time, slow in a big process.
    """
    rng = np.random.default_rng(7)
    inputs = [rng.uniform(0, 1, size=size) ** rng.uniform(0.5, 4) for size in (1, 2, 7, 30)]
    inputs.append(np.array([0.01, 0.02, 0.02, 0.5, 0.01]))  # ties
    for pvalues in inputs:
        expected = multipletests(pvalues, method="holm")[1]
        assert holm(pvalues) == pytest.approx(expected, rel=1e-12, abs=1e-15)


def test_holm_column_of_a_suite_equals_statsmodels():
    """Holm runs across all comparisons of a suite: 2 attention x 2 baselines = 4 tests."""
    rng = np.random.default_rng(5)
    rows = []
    for name, model, shift in (("a1", "gat", 0.01), ("a2", "gatv2", 0.0)):
        for seed in range(6):
            rows.append((name, model, seed, 0.7 + shift + rng.normal(0, 0.01)))
    for name, model in (("b1", "gcn"), ("b2", "mlp")):
        for seed in range(6):
            rows.append((name, model, seed, 0.7 + rng.normal(0, 0.01)))
    runs = pd.DataFrame(
        [
            {"suite": "s", "contender": c, "model": m, "options": {}, "point": {}, "seed": s}
            | {"test_metric": v}
            for c, m, s, v in rows
        ]
    )
    table = paired_comparisons(runs, Analysis(bootstrap_resamples=200))
    assert len(table) == 4
    expected = multipletests(table["p_t"].to_numpy(), method="holm")[1]
    assert table["p_t_holm"].to_numpy() == pytest.approx(expected)
