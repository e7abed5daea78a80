"""The per-node breakdown as report tables and CSV frames.

Formatting only: every figure comes from the SuiteReport's Breakdown
(harness.analysis.breakdown).
"""

from __future__ import annotations

import pandas as pd

from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, p_text, percent, signed, signed_interval
from harness.report.documents.document import Table, table
from harness.report.documents.suite_facts import report_metric
from harness.report.documents.wording import breakdown_summary, with_reasons

TERMINAL_ROWS = 12


def _grouping(name: str) -> str:
    return name.replace("_", " ")


def _where(row: object) -> list[str]:
    """Grouping, group and test nodes per seed of a breakdown row."""
    return [_grouping(row.grouping), row.group, f"{row.nodes:.0f}"]


def _difference(row: object) -> list[str]:
    """Difference, interval, Holm p and verdict of a breakdown row."""
    interval_text = signed_interval(row.low, row.high)
    return [signed(row.difference, 2), interval_text, p_text(row.p_t_holm), row.verdict]


def headline_table(report: SuiteReport) -> Table | None:
    """The headline comparison per node group; its note starts with the breakdown's summary
    sentence. A screen shows the first TERMINAL_ROWS rows."""
    nodes = report.breakdown
    if nodes is None or nodes.attention is None:
        return None
    chosen = nodes.headline_rows()
    means = nodes.groups.set_index(["grouping", "group", "variant"])["mean"]
    sides = (nodes.attention, nodes.baseline)
    level = percent(report.settings.confidence)
    lines = [
        _where(r)
        + [fixed(means.get((r.grouping, r.group, side), float("nan"))) for side in sides]
        + _difference(r)
        for r in chosen.itertuples()
    ]
    items = f"{nodes.unit}s"
    header = ["grouping", "group", items, nodes.attention, nodes.baseline]
    header += ["difference (points)", f"{level} t-interval", "Holm p", "verdict"]
    note = (
        f"{breakdown_summary(nodes)} {items}: test {items} of the group per seed (mean). Columns "
        f"4 and 5: test {report_metric(report)} of each side on the group's {items}; difference: "
        "attention minus baseline on shared seeds; Holm's adjustment runs over every group and "
        "comparison."
    )
    title = f"Per-{nodes.unit} breakdown: {nodes.attention} against {nodes.baseline}"
    marks = [line[-1] for line in lines]
    optional = (items, nodes.attention, nodes.baseline)
    return table(
        "breakdown_headline",
        title,
        header,
        lines,
        note,
        optional=optional,
        marks=marks,
        brief_rows=TERMINAL_ROWS,
    )


def comparison_rows_table(report: SuiteReport) -> Table:
    """Every comparison in every node group."""
    level = percent(report.settings.confidence)
    lines = [
        [r.attention, r.baseline, *_where(r), *_difference(r)]
        for r in report.breakdown.comparisons.itertuples()
    ]
    items = f"{report.breakdown.unit}s"
    header = ["attention", "baseline", "grouping", "group", items, "difference (points)"]
    header += [f"{level} t-interval", "Holm p", "verdict"]
    marks = [line[-1] for line in lines]
    title = f"Per-{report.breakdown.unit} breakdown, every comparison"
    optional = (items, "difference (points)", "Holm p")
    return table("breakdown", title, header, lines, optional=optional, marks=marks)


def group_table(report: SuiteReport) -> Table:
    """Each variant's metric per node group with its t-interval."""
    groups = report.breakdown.groups
    variants = list(dict.fromkeys(groups["variant"]))
    lines = []
    for (grouping, _, group), chosen in groups.groupby(["grouping", "order", "group"]):
        by_variant = {r.variant: r for r in chosen.itertuples()}
        cells = [
            f"{fixed(by_variant[v].mean)} ({interval(by_variant[v].low, by_variant[v].high)}"
            + (" clipped)" if by_variant[v].clipped else ")")
            if v in by_variant
            else "-"
            for v in variants
        ]
        lines.append([_grouping(grouping), group, f"{chosen['nodes'].mean():.0f}", *cells])
    unit = report.breakdown.unit
    note = (
        f"Mean test {report_metric(report)} over seeds on the group's test {unit}s (t-interval; "
        "clipped: it passed the metric's possible range 0 to 1 and is shown cut there)."
    )
    header = ["grouping", "group", f"{unit}s", *variants]
    return table("breakdown_groups", f"Contenders by {unit} group", header, lines, note)


def breakdown_tables(report: SuiteReport) -> list[Table]:
    """The per-node breakdown's tables, when the suite has one: headline, groups, every
    comparison."""
    headline = headline_table(report)
    if headline is None:
        return []
    return [headline, group_table(report), comparison_rows_table(report)]


def breakdown_frames(report: SuiteReport) -> dict[str, pd.DataFrame]:
    """breakdown.csv holds every group comparison (without the seeds that would settle each,
    which its reason says) and breakdown_groups.csv each variant per group."""
    if report.breakdown is None or report.breakdown.comparisons.empty:
        return {}
    rows = with_reasons(report.breakdown.comparisons, report.settings, ("low", "high"))
    return {
        "breakdown": rows.drop(columns=["seeds_needed"]),
        "breakdown_groups": report.breakdown.groups.drop(columns=["order"]),
    }
