"""The ablation tables of a report: axes ranked by effect, levels, interaction grids."""

from __future__ import annotations

from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, signed, signed_interval
from harness.report.text_table import TextTable, _table, report_metric


def axis_table(report: SuiteReport) -> TextTable:
    level = f"{report.settings.confidence:.0%}"
    rows = [
        [
            r.contender,
            str(r.rank),
            r.axis,
            str(r.levels),
            r.best_level,
            r.worst_level,
            signed(r.effect, 2),
            signed_interval(r.effect_low, r.effect_high),
        ]
        for r in report.ablation.axes.itertuples()
    ]
    header = ["contender", "rank", "axis", "levels", "best level", "worst level"]
    header += ["best minus worst (points)", f"{level} t-interval"]
    return _table("ablation_axes", "Ablation axes ranked by effect", header, rows)


def level_table(report: SuiteReport) -> TextTable:
    level = f"{report.settings.confidence:.0%}"
    rows = [
        [
            r.contender,
            r.axis,
            r.level,
            str(r.seeds),
            fixed(r.mean),
            interval(r.t_low, r.t_high),
            signed(r.effect, 2),
            signed_interval(r.effect_low, r.effect_high),
        ]
        for r in report.ablation.levels.itertuples()
    ]
    header = ["contender", "axis", "level", "seeds", f"mean {report_metric(report)}"]
    header += [f"{level} t-interval", "marginal effect (points)", f"{level} t-interval "]
    return _table("ablation_levels", "Ablation levels", header, rows)


def interaction_tables(report: SuiteReport) -> list[TextTable]:
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
        tables.append(_table(f"interaction_{len(tables) + 1}", title, header, rows, note))
    return tables
