"""The ablation tables of a report: axes ranked by effect, levels, interaction grids."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, percent, signed, signed_interval
from harness.report.documents.document import Table, as_text, column_table, table
from harness.report.documents.suite_facts import report_metric


def axis_table(report: SuiteReport) -> Table:
    columns = [as_text("contender"), as_text("rank"), as_text("axis"), as_text("levels")]
    columns += [
        as_text("best level", "best_level"),
        as_text("worst level", "worst_level"),
        ("best minus worst (points)", lambda r: signed(r.effect, 2)),
        (f"{percent(report.settings.confidence)} t-interval", effect_interval),
    ]
    title = "Ablation axes ranked by effect"
    return column_table("ablation_axes", title, report.ablation.axes, columns)


def level_table(report: SuiteReport) -> Table:
    level = percent(report.settings.confidence)
    columns = [as_text("contender"), as_text("axis"), as_text("level"), as_text("seeds")]
    columns += [
        (f"mean {report_metric(report)}", lambda r: fixed(r.mean)),
        (f"{level} t-interval", lambda r: interval(r.t_low, r.t_high)),
        ("marginal effect (points)", lambda r: signed(r.effect, 2)),
        (f"{level} t-interval ", effect_interval),
    ]
    return column_table("ablation_levels", "Ablation levels", report.ablation.levels, columns)


def effect_interval(row: object) -> str:
    return signed_interval(row.effect_low, row.effect_high)


def interaction_tables(report: SuiteReport) -> list[Table]:
    """One grid per contender: cell mean and interaction residual (points)."""
    frame = report.ablation.interactions
    tables = []
    for contender, group in frame.groupby("contender", sort=False) if not frame.empty else []:
        first, second = group["axis_a"].iloc[0], group["axis_b"].iloc[0]
        columns = list(dict.fromkeys(group["level_b"]))
        rows = []
        for level_a, cells in group.groupby("level_a", sort=False):
            by_b = {c.level_b: c for c in cells.itertuples()}
            row = [level_a] + [
                f"{fixed(by_b[b].mean)} ({signed(by_b[b].interaction, 2)})" if b in by_b else "-"
                for b in columns
            ]
            rows.append(row)
        header = [f"{first} (rows) by {second}", *columns]
        note = "Cell: mean test metric (interaction residual in points)."
        title = f"Interaction of {first} and {second} for {contender}"
        tables.append(table(f"interaction_{len(tables) + 1}", title, header, rows, note))
    return tables
