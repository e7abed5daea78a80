"""Verdicts: what each paired comparison says, and one headline sentence per suite.

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

from harness.analysis.bounds import SEED_CAP, range_advice, smallest_seed_count
from harness.formatting import metric_label, p_phrase, signed
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis

BETTER, WORSE, NO_DIFFERENCE, INCONCLUSIVE = (
    "better",
    "worse",
    "no difference that matters",
    "inconclusive",
)


@dataclass(frozen=True)
class Verdict:
    """The verdict of one comparison and why."""

    verdict: str
    reason: str
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
    level = f"{settings.confidence:.0%}"
    span = f"{level} interval {signed(low)} to {signed(high)} points"
    if row["seeds"] < 2:
        return Verdict(INCONCLUSIVE, f"only {row['seeds']} shared seed(s); need at least 2", None)
    if -m < low and high < m:
        return Verdict(NO_DIFFERENCE, f"{span} lies inside ±{m:g}, the minimum gain", None)
    if low > 0 and p < alpha:
        note = f"; the gain may be below the minimum gain of {m:g}" if low < m else ""
        return Verdict(BETTER, f"{span} excludes 0, Holm-adjusted {p_phrase(p)}{note}", None)
    if high < 0 and p < alpha:
        note = f"; the loss may be below the minimum gain of {m:g}" if high > -m else ""
        return Verdict(WORSE, f"{span} excludes 0, Holm-adjusted {p_phrase(p)}{note}", None)
    needed = seeds_to_settle(
        row["mean_difference"], row["std_difference"], m, settings.confidence, comparisons
    )
    if (low > 0 or high < 0) and not p < alpha:
        why = f"{span} excludes 0 but Holm-adjusted {p_phrase(p)} is not below {alpha:g}"
    else:
        why = f"{span} is wider than the minimum gain of ±{m:g} allows to decide"
    more = (
        f"; about {needed} seeds would likely settle it"
        if needed is not None and needed < SEED_CAP
        else "; no practical number of seeds would settle it at this spread"
    )
    return Verdict(INCONCLUSIVE, why + more, needed)


def judge_all(comparisons: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """The comparisons with `verdict`, `reason` and `seeds_needed` columns added."""
    out = comparisons.copy()
    if out.empty:
        return out.assign(verdict=[], reason=[], seeds_needed=[])
    family = comparisons.groupby("suite")["suite"].transform("size")
    verdicts = [judge(row, settings, family[i]) for i, row in comparisons.iterrows()]
    out["verdict"] = [v.verdict for v in verdicts]
    out["reason"] = [v.reason for v in verdicts]
    out["seeds_needed"] = pd.array([v.seeds_needed for v in verdicts], dtype="Int64")
    return out


def label(row: pd.Series) -> str:
    """A variant with its model kind and, for attention kinds, its heads."""
    heads = row.get("heads")
    extra = f", {int(heads)} heads" if heads is not None and not pd.isna(heads) else ""
    return f"{row['variant']} ({row['model']}{extra})"


def best_pair(contenders: pd.DataFrame) -> tuple[pd.Series, pd.Series] | None:
    """The rows (stats.describe of one suite) of the best attention variant and the best
    baseline by mean test metric: the headline comparison; None when a side is missing."""
    attention = contenders[contenders["side"] == "attention"]
    baselines = contenders[contenders["side"] == "baseline"]
    if attention.empty or baselines.empty:
        return None
    return attention.loc[attention["mean"].idxmax()], baselines.loc[baselines["mean"].idxmax()]


def headline(contenders: pd.DataFrame, judged: pd.DataFrame, settings: Analysis) -> str:
    """One sentence: the best attention variant against the best baseline of a suite.

    `contenders` is stats.describe of one suite and `judged` its judge_all comparisons.
    """
    best = best_pair(contenders)
    if best is None:
        missing = "attention contender" if (contenders["side"] != "attention").all() else "baseline"
        return f"No comparison: the suite has no {missing}."
    best_a, best_b = best
    row = judged[
        (judged["attention"] == best_a["variant"]) & (judged["baseline"] == best_b["variant"])
    ].iloc[0]
    metric = metric_label(best_a["metric"])
    if row["seeds"] < 2:
        return (
            f"{label(best_a)} against the best baseline, {label(best_b)}: inconclusive, they "
            f"share {row['seeds']} seed(s); a paired comparison needs at least 2."
        )
    level = f"{settings.confidence:.0%}"
    facts = (
        f"{level} CI {signed(row['t_low'])} to {signed(row['t_high'])}, Holm-adjusted "
        f"{p_phrase(row['p_t_holm'])}, {row['seeds']} seeds"
    )
    a, b, d = label(best_a), label(best_b), signed(row["mean_difference"])
    return _sentence(a, b, d, metric, facts, row, settings) + _range_warning(row)


def _range_warning(row: pd.Series) -> str:
    """A clipped t-interval (analysis.bounds) is said to be unreliable, after the sentence."""
    if not row.get("t_clipped", False):
        return ""
    seeds = row["seeds_for_range"]
    needed = None if pd.isna(seeds) else int(seeds)
    return (
        " The t-interval passes the possible ±100 points and is shown clipped: "
        + range_advice(int(row["seeds"]), needed)
        + "."
    )


def _sentence(a: str, b: str, d: str, metric: str, facts: str, row, settings) -> str:
    if row["verdict"] == BETTER:
        return f"{a} beats the best baseline, {b}, by {d} {metric} points ({facts})."
    if row["verdict"] == WORSE:
        return f"{a} trails the best baseline, {b}, by {d} {metric} points ({facts})."
    if row["verdict"] == NO_DIFFERENCE:
        return (
            f"{a} and the best baseline, {b}, differ by {d} {metric} points ({facts}): no "
            f"difference that matters at a minimum gain of {settings.minimum_gain:g} points."
        )
    settle = (
        f"; about {row['seeds_needed']} seeds would likely settle it"
        if not pd.isna(row["seeds_needed"]) and row["seeds_needed"] < SEED_CAP
        else ""
    )
    return (
        f"{a} against the best baseline, {b}: inconclusive, {d} {metric} points ({facts}){settle}."
    )
