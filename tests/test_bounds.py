"""t-intervals past what the metric allows: shown clipped, flagged, with seeds that would help."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats as scipy_stats

from harness.analysis.suite_report import analyse
from harness.report.documents.suite import suite_document
from harness.report.documents.wording import headline_sentence, reasons
from harness.report.formats.markdown import render

# three seeds, one of them slow to learn for the baseline: differences of +80, +79 and +22 points
ATTENTION = [0.90, 0.91, 0.89]
BASELINE = [0.10, 0.12, 0.67]


def spread_runs(run) -> pd.DataFrame:
    rows = [run("attention", "gat", s, v) for s, v in enumerate(ATTENTION)]
    rows += [run("convolution", "gcn", s, v) for s, v in enumerate(BASELINE)]
    return pd.DataFrame(rows)


def seeds_inside(spread: float, room: float) -> int:
    """Smallest n with t_{0.975, n-1} * spread / sqrt(n) < room, counted one n at a time."""
    n = 2
    while scipy_stats.t.ppf(0.975, n - 1) * spread / math.sqrt(n) >= room:
        n += 1
    return n


def test_a_difference_interval_past_100_points_is_clipped_and_flagged(crafted_run):
    report = analyse(spread_runs(crafted_run))
    row = report.comparisons.iloc[0]
    d = 100 * (np.array(ATTENTION) - np.array(BASELINE))
    half = scipy_stats.t.ppf(0.975, 2) * d.std(ddof=1) / math.sqrt(3)
    assert d.mean() + half > 100  # the unclipped t-interval reaches past +100 points
    assert row["t_low"] == pytest.approx(d.mean() - half)
    assert row["t_high"] == 100.0 and bool(row["t_clipped"])
    assert row["seeds_for_range"] == seeds_inside(d.std(ddof=1), 100 - d.mean())
    headline = headline_sentence(report)
    assert "to +100.0" in headline
    assert "with 3 seeds and this much spread the t-interval is unreliable" in headline
    assert f"about {row['seeds_for_range']} seeds would likely keep it inside" in headline


def test_a_mean_interval_past_the_metric_range_is_clipped_and_explained(crafted_run):
    report = analyse(spread_runs(crafted_run))
    baseline = report.contenders.set_index("variant").loc["convolution"]
    assert baseline["t_low"] == 0.0 and bool(baseline["t_clipped"])
    attention = report.contenders.set_index("variant").loc["attention"]
    assert not attention["t_clipped"] and attention["t_high"] < 1
    notes = [line for line in reasons(report) if "shown clipped" in line]
    assert notes[0].startswith("convolution: the 95% t-interval of its mean passes")
    assert notes[1].startswith("attention vs convolution: the 95% t-interval of the difference")
    markdown = render(suite_document(report))
    assert "is shown clipped; with 3 seeds and this much spread" in markdown
