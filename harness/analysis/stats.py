"""Analysis of stored runs: per-contender summaries and paired comparisons over seeds.

Every run is one seed of one *variant*: a contender at one point of its ablation grid
(the contender alone when it has no grid). Seeds fix the split and the initialisation, so
two variants measured on the same seed form a pair.
"""

from __future__ import annotations

import math
import warnings
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats as scipy_stats

from harness.analysis.bounds import within_range
from harness.schema.ablation import point_label
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis
from harness.schema.model_kinds import attends

POINTS = 100.0  # one metric point is 0.01 of a metric on [0, 1]
METRIC_RANGE = (0.0, 1.0)  # accuracy, macro-F1 and ROC-AUC
BOOTSTRAP_SEED = 20_240  # fixed, so a report is reproducible


def t_interval(values: np.ndarray, confidence: float = 0.95) -> tuple[float, float]:
    """Student-t interval for the mean; (nan, nan) with fewer than two values."""
    values = np.asarray(values, dtype=float)
    if len(values) < 2:
        return float("nan"), float("nan")
    mean = values.mean()
    half = scipy_stats.t.ppf((1 + confidence) / 2, len(values) - 1) * scipy_stats.sem(values)
    return float(mean - half), float(mean + half)


def interval_columns(
    values: np.ndarray, confidence: float, prefix: str, mean_name: str = ""
) -> dict[str, float]:
    """A sample's mean and Student-t interval as table columns: mean_name (or prefix),
    prefix_low, prefix_high."""
    low, high = t_interval(values, confidence)
    return {
        mean_name or prefix: float(np.mean(values)),
        f"{prefix}_low": low,
        f"{prefix}_high": high,
    }


def bootstrap_interval(
    values: np.ndarray, confidence: float = 0.95, resamples: int = 2000
) -> tuple[float, float]:
    """Percentile bootstrap interval for the mean (Efron and Tibshirani, 1993, ch. 13).

    Resamples the values with replacement `resamples` times through scipy.stats.bootstrap;
    the generator is seeded and the values sorted first, so the same values give the same
    interval in any order (runs are stored in the order they finish). With few seeds the
    percentile interval is narrower than the t-interval: it ignores the uncertainty of the
    spread itself, so read it next to the t-interval, not instead of it.
    """
    values = np.sort(np.asarray(values, dtype=float))
    if len(values) < 2:
        return float("nan"), float("nan")
    if np.all(values == values[0]):
        return float(values[0]), float(values[0])
    result = scipy_stats.bootstrap(
        (values,),
        np.mean,
        confidence_level=confidence,
        n_resamples=resamples,
        method="percentile",
        rng=np.random.default_rng(BOOTSTRAP_SEED),
    )
    return float(result.confidence_interval.low), float(result.confidence_interval.high)


def holm(pvalues: np.ndarray) -> np.ndarray:
    """Holm's step-down adjustment (Holm, 1979); NaN entries stay NaN and are not counted.

    Sorted ascending p_(1) <= ... <= p_(m): adjusted p_(i) = max_{j <= i} min(1, (m - j + 1)
    p_(j)). Controls the family-wise error rate under any dependence between the tests.
    """
    pvalues = np.asarray(pvalues, dtype=float)
    adjusted = np.full_like(pvalues, np.nan)
    present = np.flatnonzero(~np.isnan(pvalues))
    if len(present) == 0:
        return adjusted
    order = present[np.argsort(pvalues[present], kind="stable")]
    m = len(order)
    scaled = np.minimum(1.0, (m - np.arange(m)) * pvalues[order])
    adjusted[order] = np.maximum.accumulate(scaled)
    return adjusted


def with_variants(runs: pd.DataFrame) -> pd.DataFrame:
    """Runs with a `variant` column; a re-stored (variant, seed) keeps its latest run."""
    runs = runs.copy()
    runs["variant"] = [
        point_label(c, p) for c, p in zip(runs["contender"], runs["point"], strict=True)
    ]
    return runs.drop_duplicates(["suite", "variant", "seed"], keep="last").reset_index(drop=True)


def attention_side(runs: pd.DataFrame, settings: Analysis) -> pd.Series:
    """True for runs of contenders on the attention side of the comparisons."""
    if settings.attention:
        return runs["contender"].isin(settings.attention)
    if settings.baselines:
        return ~runs["contender"].isin(settings.baselines)
    return runs["model"].map(attends).astype(bool)


def describe(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """One row per (suite, variant): test metric over seeds (metric units) and mean costs."""
    runs = with_variants(runs)
    runs["attention"] = attention_side(runs, settings)
    rows = []
    for (suite, variant), group in runs.groupby(["suite", "variant"], sort=False):
        values = group["test_metric"].dropna().to_numpy(dtype=float)  # NaN: metric undefined
        if len(values) == 0:
            values = np.array([np.nan])
        spread = float(values.std(ddof=1)) if len(values) > 1 else float("nan")
        bounded = within_range(
            float(values.mean()),
            spread,
            t_interval(values, settings.confidence),
            METRIC_RANGE,
            settings.confidence,
        )
        boot_low, boot_high = bootstrap_interval(
            values, settings.confidence, settings.bootstrap_resamples
        )
        first = group.iloc[0]
        rows.append(
            {
                "suite": suite,
                "variant": variant,
                "contender": first["contender"],
                "model": first["model"],
                "heads": first["options"].get("heads"),
                "point": first["point"],
                "side": "attention" if first["attention"] else "baseline",
                "metric": first["metric"],
                "seeds": int(np.isfinite(values).sum()),
                "mean": float(values.mean()),
                "std": spread,
                "median": float(np.median(values)),
                "min": float(values.min()),
                "max": float(values.max()),
                "t_low": bounded.low,
                "t_high": bounded.high,
                "t_clipped": bounded.clipped,
                "seeds_for_range": bounded.seeds_for_range,
                "bootstrap_low": boot_low,
                "bootstrap_high": boot_high,
                "seconds_per_epoch": float(group["seconds_per_epoch"].mean()),
                "params": int(group["params"].iloc[0]),
                "peak_mb": float(group["peak_mb"].max()),
            }
        )
    return pd.DataFrame(rows)


def paired_test(differences: np.ndarray, settings: Analysis = DEFAULT_ANALYSIS) -> dict:
    """Paired statistics of per-seed differences (attention minus baseline, in points).

    Paired t-test: t = mean(d) / (sd(d) / sqrt(n)), df = n - 1 (Student, 1908); Wilcoxon
    signed-rank test on the same differences (Wilcoxon, 1945), both two-sided via
    scipy.stats. Effect size Cohen's d_z = mean(d) / sd(d) (Cohen, 1988, for paired data).
    All differences zero gives p = 1: the data show no difference at all.
    """
    d = np.asarray(differences, dtype=float)
    n = len(d)
    out = {
        "seeds": n,
        "mean_difference": float(d.mean()) if n else float("nan"),
        "std_difference": float(d.std(ddof=1)) if n > 1 else float("nan"),
    }
    bounded = within_range(
        out["mean_difference"],
        out["std_difference"],
        t_interval(d, settings.confidence),
        (-POINTS, POINTS),
        settings.confidence,
    )
    out.update(t_low=bounded.low, t_high=bounded.high, t_clipped=bounded.clipped)
    out["seeds_for_range"] = bounded.seeds_for_range
    out["bootstrap_low"], out["bootstrap_high"] = bootstrap_interval(
        d, settings.confidence, settings.bootstrap_resamples
    )
    out.update(t_statistic=np.nan, df=n - 1, p_t=np.nan, wilcoxon_statistic=np.nan)
    out.update(p_wilcoxon=np.nan, effect_size=np.nan)
    if n < 2:
        return out
    if np.all(d == 0):
        out.update(t_statistic=0.0, p_t=1.0, wilcoxon_statistic=0.0, p_wilcoxon=1.0)
        out["effect_size"] = 0.0
        return out
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        t_result = scipy_stats.ttest_rel(d, np.zeros(n))
        w_result = scipy_stats.wilcoxon(d)
    out.update(t_statistic=float(t_result.statistic), p_t=float(t_result.pvalue))
    out.update(wilcoxon_statistic=float(w_result.statistic), p_wilcoxon=float(w_result.pvalue))
    sd = out["std_difference"]
    out["effect_size"] = (
        float(out["mean_difference"] / sd)
        if sd > 0
        else math.copysign(math.inf, out["mean_difference"])
    )
    return out


def paired_comparisons(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """Each attention variant against each baseline variant on their shared seeds.

    Differences are attention minus baseline in metric points. Holm's adjustment runs over
    all comparisons of a suite (columns p_t_holm and p_wilcoxon_holm).
    """
    runs = with_variants(runs)
    runs["attention"] = attention_side(runs, settings)
    frames = []
    for suite, suite_runs in runs.groupby("suite", sort=False):
        table = suite_runs.pivot(index="seed", columns="variant", values="test_metric")
        sides = suite_runs.drop_duplicates("variant").set_index("variant")["attention"]
        rows = []
        for attention in [v for v, is_attention in sides.items() if is_attention]:
            for baseline in [v for v, is_attention in sides.items() if not is_attention]:
                both = table[[attention, baseline]].dropna()
                differences = POINTS * (both[attention] - both[baseline]).to_numpy()
                rows.append(
                    {"suite": suite, "attention": attention, "baseline": baseline}
                    | paired_test(differences, settings)
                )
        frame = pd.DataFrame(rows)
        if not frame.empty:
            frame["p_t_holm"] = holm(frame["p_t"].to_numpy())
            frame["p_wilcoxon_holm"] = holm(frame["p_wilcoxon"].to_numpy())
        frames.append(frame)
    return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()


def summarise(runs: pd.DataFrame, confidence: float = 0.95) -> pd.DataFrame:
    """One row per (suite, contender): test metric over seeds with a t-interval at
    `confidence` (kept in the `confidence` column), and mean costs."""
    rows = []
    for (suite, contender), group in runs.groupby(["suite", "contender"], sort=False):
        values = group["test_metric"].to_numpy(dtype=float)
        spread = float(values.std(ddof=1)) if len(values) > 1 else float("nan")
        bounded = within_range(
            float(values.mean()), spread, t_interval(values, confidence), METRIC_RANGE, confidence
        )
        rows.append(
            {
                "suite": suite,
                "contender": contender,
                "model": group["model"].iloc[0],
                "metric": group["metric"].iloc[0],
                "seeds": len(values),
                "mean": float(values.mean()),
                "std": spread,
                "ci_low": bounded.low,
                "ci_high": bounded.high,
                "ci_clipped": bounded.clipped,
                "confidence": confidence,
                "seconds_per_epoch": float(group["seconds_per_epoch"].mean()),
                "params": int(group["params"].iloc[0]),
                "peak_mb": float(group["peak_mb"].max()),
                "warnings": run_warnings(group, contender),
            }
        )
    return pd.DataFrame(rows)


@dataclass(frozen=True)
class RecordedWarning:
    """A warning recorded in runs of a contender (extras["warnings"]): in `count` of `runs`."""

    contender: str
    text: str
    count: int
    runs: int


def run_warnings(runs: pd.DataFrame, contender: str) -> tuple[RecordedWarning, ...]:
    """The warnings recorded in a contender's runs, each with how many runs hold it."""
    texts = [
        text
        for extras in runs["extras"]
        if isinstance(extras, dict)
        for text in extras.get("warnings", [])
    ]
    counted = Counter(texts).items()
    return tuple(RecordedWarning(contender, text, count, len(runs)) for text, count in counted)
