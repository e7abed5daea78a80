"""Nightly gate: compare a suite's current runs with a saved baseline.

Per contender, four checks:

- metric: d_s = current_s - baseline_s on each seed s shared by both. The drop is -mean(d) in
  points (metric x 100). It fails when the drop exceeds the suite's tolerance AND a two-sided
  paired t-test (Student, 1908; scipy.stats.ttest_rel) rejects mean(d) = 0 at the suite's
  significance level alpha. The reported interval is the (1 - alpha) t-interval of the paired
  mean difference, mean(d) +- t_{1-alpha/2, n-1} * sd(d) / sqrt(n). With fewer than two shared
  seeds the seeds cannot be paired, so Welch's unequal-variance t-test and its interval are
  used instead (Welch, 1947; scipy.stats.ttest_ind with equal_var=False).
- time and memory: ratio of mean seconds per epoch and of mean peak memory, current over
  baseline; above the suite's ratio the check fails or warns, as the suite says.
- reproducibility: runs with the same key (identical inputs) whose test metric differs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats as scipy_stats

from harness.gate.baseline import run_labels
from harness.schema.gate import BaselineFile, GateOptions
from harness.schema.suite import Suite

PASS, WARN, FAIL, SKIP = "pass", "warn", "fail", "skip"
SAME_METRIC = 1e-6  # baselines keep six decimals


@dataclass(frozen=True)
class MetricComparison:
    """Current minus baseline test metric of one contender, with its test and interval."""

    baseline_mean: float
    current_mean: float
    difference: float
    low: float
    high: float
    p_value: float
    test: str  # "paired t-test" or "Welch t-test"
    seeds: int  # shared seeds (paired) or current seeds (Welch)

    @property
    def drop_points(self) -> float:
        return -100 * self.difference


@dataclass(frozen=True)
class Check:
    """One verdict of one contender: status and a one-line message with the figures."""

    contender: str
    check: str
    status: str
    message: str
    figures: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class GateOutcome:
    """All checks of one gate run, plus where it ran and what it compared with."""

    suite: str
    metric: str
    confidence: float
    checks: tuple[Check, ...]
    environment: dict[str, Any]
    baseline_environment: dict[str, Any]
    environment_differences: tuple[str, ...]
    contender_seconds: dict[str, float]
    gated_at: float

    @property
    def status(self) -> str:
        statuses = {check.status for check in self.checks}
        if FAIL in statuses:
            return FAIL
        return WARN if WARN in statuses or self.environment_differences else PASS

    @property
    def exit_code(self) -> int:
        return 1 if self.status == FAIL else 0

    def of(self, contender: str) -> dict[str, Check]:
        return {c.check: c for c in self.checks if c.contender == contender}


def _t_figures(test: Any, confidence: float) -> tuple[float, float, float]:
    """p-value and the interval's ends of a scipy t-test result."""
    interval = test.confidence_interval(confidence)
    return float(test.pvalue), float(interval.low), float(interval.high)


def compare_metric(
    baseline: dict[int, float], current: dict[int, float], confidence: float
) -> MetricComparison:
    """Paired t-test and t-interval on shared seeds; Welch's test when fewer than two."""
    shared = sorted(set(baseline) & set(current))
    if len(shared) >= 2:
        before = np.array([baseline[s] for s in shared])
        after = np.array([current[s] for s in shared])
        differences = after - before
        mean = float(differences.mean())
        if np.allclose(differences, differences[0], rtol=0, atol=1e-12):
            # no spread: the t statistic is undefined, the difference is exact
            p_value, low, high = (1.0 if abs(mean) < 1e-12 else 0.0), mean, mean
        else:
            p_value, low, high = _t_figures(scipy_stats.ttest_rel(after, before), confidence)
        method, count = "paired t-test", len(shared)
    else:
        before = np.array(list(baseline.values()))
        after = np.array(list(current.values()))
        mean = float(after.mean() - before.mean())
        if len(before) < 2 or len(after) < 2:
            p_value = low = high = math.nan
        else:
            welch = scipy_stats.ttest_ind(after, before, equal_var=False)
            p_value, low, high = _t_figures(welch, confidence)
        method, count = "Welch t-test", len(after)
    means = float(before.mean()), float(after.mean())
    return MetricComparison(*means, mean, low, high, p_value, method, count)


def metric_check(
    contender: str, metric: str, comparison: MetricComparison, options: GateOptions
) -> Check:
    level = round(100 * (1 - options.significance))
    figures = (
        f"baseline {comparison.baseline_mean:.4f}, now {comparison.current_mean:.4f}; "
        f"difference {100 * comparison.difference:+.2f} points, {level}% t-interval "
        f"{100 * comparison.low:+.2f} to {100 * comparison.high:+.2f} points "
        f"({comparison.test}, p = {comparison.p_value:.4g}, {comparison.seeds} seeds); "
        f"tolerance {options.tolerance_points:g} points"
    )
    beyond = comparison.drop_points > options.tolerance_points
    significant = comparison.p_value < options.significance
    if beyond and significant:
        status, verdict = FAIL, f"{metric} dropped {comparison.drop_points:.2f} points"
    elif beyond and math.isnan(comparison.p_value):
        status, verdict = WARN, f"{metric} dropped beyond tolerance; too few seeds to test"
    elif beyond:
        status, verdict = PASS, f"{metric} drop not significant at alpha {options.significance:g}"
    else:
        status, verdict = PASS, f"{metric} within tolerance"
    return Check(
        contender,
        "metric",
        status,
        f"{contender}: {verdict}: {figures}",
        {
            "baseline": comparison.baseline_mean,
            "current": comparison.current_mean,
            "difference": comparison.difference,
            "low": comparison.low,
            "high": comparison.high,
            "p_value": comparison.p_value,
            "test": comparison.test,
            "seeds": comparison.seeds,
        },
    )


def cost_check(
    contender: str, check: str, baseline: float, current: float, limit: float, action: str
) -> Check:
    label, unit = {"time": ("seconds per epoch", "s"), "memory": ("peak memory", " MB")}[check]
    ratio = current / baseline
    status = action if ratio > limit else PASS
    verdict = f"{label} x{ratio:.2f}" + (" above" if ratio > limit else " within") + " limit"
    digits = 5 if check == "time" else 3
    return Check(
        contender,
        check,
        status,
        f"{contender}: {verdict}: baseline {baseline:.{digits}f}{unit}, now "
        f"{current:.{digits}f}{unit}, limit x{limit:g}",
        {"baseline": baseline, "current": current, "ratio": ratio, "limit": limit},
    )


def reproducibility_check(
    contender: str, saved: pd.DataFrame, current: pd.DataFrame, action: str
) -> Check:
    """Runs with the same key are the same inputs; their metric should not move."""
    joined = saved.merge(current, on="key", suffixes=("_baseline", "_now"))
    if joined.empty:
        return Check(
            contender, "reproducibility", SKIP, f"{contender}: no run with identical inputs"
        )
    moved = joined[(joined["test_metric_now"] - joined["test_metric_baseline"]).abs() > SAME_METRIC]
    if moved.empty:
        return Check(
            contender,
            "reproducibility",
            PASS,
            f"{contender}: {len(joined)} runs with identical inputs gave identical metrics",
        )
    changes = ", ".join(
        f"seed {int(row.seed_now)}: {row.test_metric_baseline:.6f} -> {row.test_metric_now:.6f}"
        for row in moved.itertuples()
    )
    return Check(
        contender,
        "reproducibility",
        action,
        f"{contender}: reproducibility change: identical inputs (same run key) gave a different "
        f"test metric on {len(moved)} of {len(joined)} runs ({changes})",
        {"changed": len(moved), "compared": len(joined)},
    )


def evaluate(
    suite: Suite,
    contenders: list[str],
    baseline: BaselineFile,
    runs: pd.DataFrame,
    environment: dict[str, Any],
    environment_differences: list[str],
    gated_at: float,
    unmatched: list[tuple[str, str]] | None = None,
) -> GateOutcome:
    """Every check of every contender label (contender, or contender and ablation point; the
    runs' contender and point) in the order given; an ablation point on one side only
    (`unmatched`: label and 'suite' or 'baseline') is reported, not compared."""
    options = suite.gate
    checks: list[Check] = []
    labels = run_labels(runs)
    seconds: dict[str, float] = {}
    costs = (
        ("time", "seconds_per_epoch", options.time_ratio, options.time_action),
        ("memory", "peak_mb", options.memory_ratio, options.memory_action),
    )
    for name in contenders:
        now = runs[[label == name for label in labels]]
        saved = pd.DataFrame([run.model_dump() for run in baseline.contenders[name].runs])
        seconds[name] = float(now["seconds"].sum())
        comparison = compare_metric(
            dict(zip(saved["seed"], saved["test_metric"], strict=True)),
            # compared at the precision a baseline keeps, so an unchanged run differs by 0
            dict(zip(now["seed"], now["test_metric"].round(6), strict=True)),
            1 - options.significance,
        )
        checks.append(metric_check(name, suite.metric, comparison, options))
        for check, column, limit, action in costs:
            baseline_cost, current_cost = float(saved[column].mean()), float(now[column].mean())
            checks.append(cost_check(name, check, baseline_cost, current_cost, limit, action))
        checks.append(
            reproducibility_check(
                name,
                saved[["key", "seed", "test_metric"]],
                now[["key", "seed", "test_metric"]],
                options.reproducibility_action,
            )
        )
    for name, side in unmatched or []:
        other = "baseline" if side == "suite" else "suite"
        advice = "; save a new baseline to compare it" if side == "suite" else ""
        message = f"{name}: in the {side} but not in the {other}; not compared{advice}"
        checks.append(Check(name, "compared", WARN, message))
    return GateOutcome(
        suite=suite.name,
        metric=suite.metric,
        confidence=1 - options.significance,
        checks=tuple(checks),
        environment=dict(environment),
        baseline_environment=baseline.environment.model_dump(),
        environment_differences=tuple(environment_differences),
        contender_seconds=seconds,
        gated_at=gated_at,
    )
