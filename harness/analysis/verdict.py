"""Verdicts: what each paired comparison says, and the figures of each suite's headline
comparison. Figures only; harness.report.documents.wording writes them as sentences.

Rules, applied in order to the paired t-interval [low, high] of the mean difference
(attention minus baseline, metric points), with m the suite's minimum gain and alpha = 1 -
confidence:

1. fewer than two shared seeds: inconclusive;
2. -m < low and high < m: no difference that matters (even when the interval excludes 0);
3. low > 0 and Holm-adjusted p < alpha: better;
4. high < 0 and Holm-adjusted p < alpha: worse;
5. otherwise: inconclusive, with the number of seeds that would likely settle it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from harness.analysis.bounds import smallest_seed_count
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis

BETTER, WORSE, NO_DIFFERENCE, INCONCLUSIVE = (
    "better",
    "worse",
    "no difference that matters",
    "inconclusive",
)
# which condition decided a verdict (column `decided_by`): rule 1, rule 2, rules 3 and 4, and
# rule 5 split in two: the interval excludes 0 but the adjusted p does not, or it is too wide
FEW_SEEDS, INSIDE_MINIMUM_GAIN, EXCLUDES_ZERO, NOT_SIGNIFICANT, TOO_WIDE = (
    "few_seeds",
    "inside_minimum_gain",
    "excludes_zero",
    "not_significant",
    "too_wide",
)


@dataclass(frozen=True)
class Verdict:
    """The verdict of one comparison, the condition that decided it and, for a gain or loss,
    whether it may be below the minimum gain; for an inconclusive one the seeds to settle it."""

    verdict: str
    decided_by: str
    below_minimum_gain: bool
    seeds_needed: int | None


def seeds_to_settle(
    mean_difference: float,
    std_difference: float,
    minimum_gain: float,
    confidence: float,
    comparisons: int = 1,
) -> int | None:
    """Seeds that would likely settle an inconclusive comparison, if mean and spread hold.

    With n seeds, the paired t-interval has half-width h(n) = t_{q, n-1} * s / sqrt(n), s the
    standard deviation of the per-seed differences. For an observed mean difference d,
    minimum gain m, alpha = 1 - confidence and k comparisons in the suite, the comparison
    settles at the smallest n where either
      - the interval excludes 0 at the Bonferroni level, which bounds Holm's adjustment from
        above: t_{1 - alpha / (2k), n-1} * s / sqrt(n) < |d|, or
      - the interval fits inside (-m, m): t_{1 - alpha / 2, n-1} * s / sqrt(n) < m - |d|.
    This is a precision-based sample size (common practice); it assumes d and s stay as
    observed. None when neither can happen (d = 0 and m = 0 or s unknown); capped at SEED_CAP.
    """
    d, s = abs(mean_difference), std_difference
    alpha = 1 - confidence
    if not np.isfinite(s) or not np.isfinite(d):
        return None
    candidates = []
    if d > 0:
        candidates.append(smallest_seed_count(s, d, 1 - alpha / (2 * max(1, comparisons))))
    if minimum_gain - d > 0:
        candidates.append(smallest_seed_count(s, minimum_gain - d, 1 - alpha / 2))
    return min(candidates) if candidates else None


def judge(row: pd.Series, settings: Analysis, comparisons: int = 1) -> Verdict:
    """The verdict of one row of stats.paired_comparisons (one of `comparisons` in its suite)."""
    m, alpha = settings.minimum_gain, 1 - settings.confidence
    low, high, p = row["t_low"], row["t_high"], row["p_t_holm"]
    if row["seeds"] < 2:
        return Verdict(INCONCLUSIVE, FEW_SEEDS, False, None)
    if -m < low and high < m:
        return Verdict(NO_DIFFERENCE, INSIDE_MINIMUM_GAIN, False, None)
    if low > 0 and p < alpha:
        return Verdict(BETTER, EXCLUDES_ZERO, bool(low < m), None)
    if high < 0 and p < alpha:
        return Verdict(WORSE, EXCLUDES_ZERO, bool(high > -m), None)
    needed = seeds_to_settle(
        row["mean_difference"], row["std_difference"], m, settings.confidence, comparisons
    )
    excludes_zero = (low > 0 or high < 0) and not p < alpha
    return Verdict(INCONCLUSIVE, NOT_SIGNIFICANT if excludes_zero else TOO_WIDE, False, needed)


def judge_all(comparisons: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """The comparisons with `verdict`, `decided_by`, `below_minimum_gain` and `seeds_needed`
    columns added (the fields of Verdict)."""
    out = comparisons.copy()
    if out.empty:
        return out.assign(verdict=[], decided_by=[], below_minimum_gain=[], seeds_needed=[])
    family = comparisons.groupby("suite")["suite"].transform("size")
    verdicts = [judge(row, settings, family[i]) for i, row in comparisons.iterrows()]
    out["verdict"] = [v.verdict for v in verdicts]
    out["decided_by"] = [v.decided_by for v in verdicts]
    out["below_minimum_gain"] = [v.below_minimum_gain for v in verdicts]
    out["seeds_needed"] = pd.array([v.seeds_needed for v in verdicts], dtype="Int64")
    return out


@dataclass(frozen=True)
class Side:
    """One side of the headline comparison: a variant, its model kind and, for attention
    kinds, its heads."""

    variant: str
    model: str
    heads: int | None


@dataclass(frozen=True)
class Headline:
    """The figures of a suite's headline comparison, the best attention variant against the
    best baseline by mean test metric; when the suite lacks a side, only `missing` ("attention"
    or "baseline") is set. Differences are in metric points; `clipped` marks a t-interval
    clipped to ±100 points (analysis.bounds), `seeds_for_range` the seeds that would keep it
    inside."""

    missing: str | None = None
    attention: Side | None = None
    baseline: Side | None = None
    metric: str = ""
    verdict: str = ""
    seeds: int = 0
    difference: float = float("nan")
    low: float = float("nan")
    high: float = float("nan")
    p_holm: float = float("nan")
    seeds_needed: int | None = None
    clipped: bool = False
    seeds_for_range: int | None = None


def best_pair(contenders: pd.DataFrame) -> tuple[pd.Series, pd.Series] | None:
    """The rows (stats.describe of one suite) of the best attention variant and the best
    baseline by mean test metric: the headline comparison; None when a side is missing."""
    attention = contenders[contenders["side"] == "attention"]
    baselines = contenders[contenders["side"] == "baseline"]
    if attention.empty or baselines.empty:
        return None
    return attention.loc[attention["mean"].idxmax()], baselines.loc[baselines["mean"].idxmax()]


def headline(contenders: pd.DataFrame, judged: pd.DataFrame) -> Headline:
    """The headline comparison of a suite: `contenders` is stats.describe of one suite and
    `judged` its judge_all comparisons."""
    best = best_pair(contenders)
    if best is None:
        missing = "attention" if (contenders["side"] != "attention").all() else "baseline"
        return Headline(missing=missing)
    best_a, best_b = best
    row = judged[
        (judged["attention"] == best_a["variant"]) & (judged["baseline"] == best_b["variant"])
    ].iloc[0]
    return Headline(
        attention=side(best_a),
        baseline=side(best_b),
        metric=str(best_a["metric"]),
        verdict=str(row["verdict"]),
        seeds=int(row["seeds"]),
        difference=float(row["mean_difference"]),
        low=float(row["t_low"]),
        high=float(row["t_high"]),
        p_holm=float(row["p_t_holm"]),
        seeds_needed=count(row["seeds_needed"]),
        clipped=bool(row.get("t_clipped", False)),
        seeds_for_range=count(row.get("seeds_for_range")),
    )


def side(row: pd.Series) -> Side:
    heads = row.get("heads")
    missing = heads is None or pd.isna(heads)
    return Side(str(row["variant"]), str(row["model"]), None if missing else int(heads))


def count(value: object) -> int | None:
    """A seed count that may be missing (None, NaN or pd.NA) as an int or None."""
    return None if value is None or pd.isna(value) else int(value)
