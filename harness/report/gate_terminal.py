"""Gate outcomes and gate history as rich tables for the terminal."""

from __future__ import annotations

import pandas as pd
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from harness.formatting import as_points, fixed, metric_label, sparkline
from harness.gate.compare import PASS, SKIP, GateOutcome

STYLES = {"pass": "green", "warn": "yellow", "fail": "bold red", "skip": "dim"}
MARKS = {"pass": "✓", "warn": "!", "fail": "✗", "skip": "-"}


def print_gate(outcome: GateOutcome, console: Console) -> None:
    """One row per contender, then every check that did not pass, then the verdict."""
    metric = metric_label(outcome.metric)
    level = round(100 * outcome.confidence)
    table = Table(
        title=f"Gate: {escape(outcome.suite)} (test {metric})",
        title_justify="left",
        box=box.SIMPLE_HEAD,
        pad_edge=False,
        collapse_padding=True,
        caption=f"Δ = now − baseline in points; {level}% t-interval of the paired mean "
        "difference (Welch when fewer than two seeds are shared)",
        caption_justify="left",
    )
    table.add_column("contender", justify="left", no_wrap=True)
    for header in ("baseline", "now", f"Δ [{level}% interval]", "s/ep ×", "mem ×"):
        table.add_column(header, justify="right", no_wrap=True)
    table.add_column("checks", justify="left", no_wrap=True)
    for contender in outcome.contender_seconds:
        checks = outcome.of(contender)
        figures = checks["metric"].figures
        marks = "".join(f"[{STYLES[c.status]}]{MARKS[c.status]}[/]" for c in checks.values())
        table.add_row(
            escape(contender),
            f"{figures['baseline']:.3f}",
            f"{figures['current']:.3f}",
            f"{as_points(figures['difference'])} "
            f"[{as_points(figures['low'])}, {as_points(figures['high'])}]",
            f"{checks['time'].figures['ratio']:.2f}",
            f"{checks['memory'].figures['ratio']:.2f}",
            marks,
        )
    console.print(table)
    console.print(
        "checks: metric, time, memory, reproducibility; "
        + ", ".join(f"{mark} {status}" for status, mark in MARKS.items()),
        highlight=False,
    )
    for check in outcome.checks:
        if check.status not in (PASS, SKIP):
            console.print(
                f"[{STYLES[check.status]}]{check.status}[/] {check.check}: {escape(check.message)}",
                highlight=False,
                soft_wrap=True,
            )
    if outcome.environment_differences:
        console.print(
            "[yellow]environment differs from the baseline's:[/] "
            + escape("; ".join(outcome.environment_differences)),
            highlight=False,
            soft_wrap=True,
        )
    console.print(f"gate [{STYLES[outcome.status]}]{outcome.status.upper()}[/]")


def history_table(history: pd.DataFrame, suite: str, last: int = 20) -> Table:
    """Each contender's latest figures, each with a trend over its last `last` gate runs.

    Metric trends span at least 2 points, cost trends at least 10% of their largest value.
    """
    metric = metric_label(history["metric"].iloc[-1])
    first = pd.Timestamp(history["gated_at"].min(), unit="s").strftime("%Y-%m-%d %H:%M")
    final = pd.Timestamp(history["gated_at"].max(), unit="s").strftime("%Y-%m-%d %H:%M")
    gates = history["gate_id"].nunique()
    table = Table(
        title=f"Gate history: {escape(suite)}, {gates} gate run{'s' if gates != 1 else ''}, "
        f"{first} to {final} UTC",
        title_justify="left",
        box=box.SIMPLE_HEAD,
        pad_edge=False,
        collapse_padding=True,
        caption="latest value, then one mark per gate run, oldest first",
        caption_justify="left",
    )
    table.add_column("contender", no_wrap=True)
    table.add_column("gates", justify="right")
    for header in (f"test {metric}", "s/epoch", "peak MB", "verdicts"):
        table.add_column(header, no_wrap=True)
    for contender, rows in history.groupby("contender", sort=False):
        rows = rows.tail(last)
        latest = rows.iloc[-1]
        metric_values = rows["metric_mean"].tolist()
        seconds = rows["seconds_per_epoch"].tolist()
        memory = rows["peak_mb"].tolist()
        table.add_row(
            escape(str(contender)),
            str(len(rows)),
            f"{fixed(float(latest['metric_mean']), 3)} {sparkline(metric_values, 0.02)}",
            f"{fixed(float(latest['seconds_per_epoch']), 4)} "
            f"{sparkline(seconds, 0.1 * max(seconds))}",
            f"{fixed(float(latest['peak_mb']), 2)} {sparkline(memory, 0.1 * max(memory))}",
            "".join(f"[{STYLES[s]}]{MARKS[s]}[/]" for s in rows["contender_status"]),
        )
    return table
