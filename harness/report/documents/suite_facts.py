"""The facts a suite report states about itself: its metric, seeds and settings."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.formatting import metric_label, percent


def points(value: float) -> str:
    return f"{value:g} point" + ("" if value == 1 else "s")


def facts(report: SuiteReport) -> str:
    """One paragraph: what was measured and with which settings."""
    settings = report.settings
    return (
        f"Metric: test {report_metric(report)}; {seed_count(report)}; minimum "
        f"gain that matters: {points(settings.minimum_gain)}; confidence "
        f"{percent(settings.confidence)}; {settings.bootstrap_resamples} bootstrap resamples. "
        "Figures are estimates on this data under these splits and seeds, not guarantees "
        "about other data."
    )


def report_metric(report: SuiteReport) -> str:
    return metric_label(report.metric)


def seed_count(report: SuiteReport) -> str:
    """Seeds per contender, as the tables count them: `6 seeds`, or `3 to 6 seeds per
    contender` while a suite is partly run (the headline counts the seeds a pair shares)."""
    counts = report.contenders["seeds"]
    low, high = int(counts.min()), int(counts.max())
    return f"{high} seeds" if low == high else f"{low} to {high} seeds per contender"
