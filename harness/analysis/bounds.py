"""t-intervals kept inside what the metric allows.

With few seeds and a large spread, the Student-t interval mean ± t_{(1+c)/2, n-1} · s / √n
can pass the metric's possible range (a metric in [0, 1]; a difference of two such metrics
in [-100, 100] points). Such an interval is shown clipped to the range and flagged, with the
number of seeds at which, if mean and spread held, it would stay inside: the smallest n with
t_{(1+c)/2, n-1} · s / √n below the distance from the mean to the nearer end of the range
(a precision-based sample size, common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import stats as scipy_stats

SEED_CAP = 10_000


def smallest_seed_count(spread: float, target: float, level: float) -> int:
    """Smallest n >= 2 with t_{level, n-1} * spread / sqrt(n) < target, capped at SEED_CAP."""
    if spread == 0:
        return 2
    n = max(2, math.ceil((scipy_stats.norm.ppf(level) * spread / target) ** 2))
    while n < SEED_CAP and scipy_stats.t.ppf(level, n - 1) * spread / math.sqrt(n) >= target:
        n += 1
    return min(n, SEED_CAP)


@dataclass(frozen=True)
class Bounded:
    """A t-interval clipped to the possible range; `clipped` when it had to be."""

    low: float
    high: float
    clipped: bool
    seeds_for_range: int | None  # seeds that would keep it inside; None: not clipped or never


def within_range(
    mean: float,
    std: float,
    interval: tuple[float, float],
    possible: tuple[float, float],
    confidence: float,
) -> Bounded:
    """The interval clipped to `possible` (lowest, highest)."""
    low, high = interval
    lowest, highest = possible
    if not (math.isfinite(low) and math.isfinite(high)) or (low >= lowest and high <= highest):
        return Bounded(low, high, False, None)
    room = min(mean - lowest, highest - mean)
    needed = None
    if room > 0 and math.isfinite(std):
        needed = smallest_seed_count(std, room, (1 + confidence) / 2)
        needed = needed if needed < SEED_CAP else None
    return Bounded(max(low, lowest), min(high, highest), True, needed)
