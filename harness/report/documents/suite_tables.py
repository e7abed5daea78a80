"""The suite report's tables as rows of text: contenders, comparisons and cost here, the rest
in ablation_tables, diagnostic_tables and breakdown, the sentences in wording. Formatting
only: every figure comes from a SuiteReport (harness.analysis.suite_report)."""

from __future__ import annotations

from dataclasses import replace

import pandas as pd

from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, p_text, percent, signed, signed_interval
from harness.report.documents.ablation_tables import axis_table, interaction_tables, level_table
from harness.report.documents.breakdown import breakdown_frames, breakdown_tables
from harness.report.documents.diagnostic_tables import (
    arrival_table,
    attention_table,
    edge_type_table,
    homophily_map_table,
    homophily_table,
)
from harness.report.documents.document import Table, as_text, column_table, table
from harness.report.documents.suite_facts import points, report_metric
from harness.report.documents.wording import with_reasons


def contender_table(report: SuiteReport) -> Table:
    level = percent(report.settings.confidence)
    columns = [as_text("contender", "variant"), as_text("model"), as_text("side"), as_text("seeds")]
    columns += [
        (f"test {report_metric(report)} mean ± std", lambda r: f"{fixed(r.mean)} ± {fixed(r.std)}"),
        ("median", lambda r: fixed(r.median)),
        ("min to max", lambda r: f"{fixed(r.min)} to {fixed(r.max)}"),
        (f"{level} t-interval", lambda r: interval(r.t_low, r.t_high)),
        (f"{level} bootstrap", lambda r: interval(r.bootstrap_low, r.bootstrap_high)),
    ]
    optional = ("median", "min to max", f"{level} bootstrap")
    title = "Contenders over seeds"
    return column_table("contenders", title, report.contenders, columns, optional=optional)


def comparison_table(report: SuiteReport) -> Table:
    level = percent(report.settings.confidence)
    columns = [as_text("attention"), as_text("baseline"), as_text("seeds")]
    columns += [
        ("difference (points)", lambda r: signed(r.mean_difference, 2)),
        (f"{level} t-interval", lambda r: signed_interval(r.t_low, r.t_high)),
        (f"{level} bootstrap", lambda r: signed_interval(r.bootstrap_low, r.bootstrap_high)),
        ("t (df)", lambda r: f"{fixed(r.t_statistic, 2)} ({r.df})"),
        ("p", lambda r: p_text(r.p_t)),
        ("Holm p", lambda r: p_text(r.p_t_holm)),
        ("Wilcoxon p", lambda r: p_text(r.p_wilcoxon)),
        ("d_z", lambda r: fixed(r.effect_size, 2)),
        as_text("verdict"),
    ]
    note = (
        f"Differences are attention minus baseline in {report_metric(report)} points on shared "
        f"seeds; minimum gain that matters: {points(report.settings.minimum_gain)}; Holm's "
        "adjustment runs over all comparisons of the suite."
    )
    optional = ("seeds", f"{level} bootstrap", "t (df)", "p", "Wilcoxon p", "d_z")
    part = column_table(
        "comparisons", "Paired comparisons", report.comparisons, columns, note, optional
    )
    return replace(part, marks=tuple(row[-1] for row in part.rows))


def cost_table(report: SuiteReport) -> Table:
    def mark(flag: bool) -> str:
        return "yes" if flag else ""

    rows = [
        [
            r.variant,
            r.model,
            fixed(r.mean),
            fixed(r.seconds_per_epoch, 4),
            f"{r.params:,}",
            fixed(r.peak_mb, 2),
            mark(r.pareto),
            mark(r.pareto_seconds),
            mark(r.pareto_params),
            mark(r.pareto_memory),
        ]
        for r in report.cost.itertuples()
    ]
    header = ["contender", "model", f"mean {report_metric(report)}", "s/epoch", "params"]
    header += ["tensor MiB", "Pareto (all)", "Pareto (time)", "Pareto (params)"]
    header.append("Pareto (memory)")
    note = ""
    optional = ("Pareto (time)", "Pareto (params)", "Pareto (memory)")
    return table("cost", "Cost trade-off", header, rows, note, optional=optional)


def all_tables(report: SuiteReport) -> list[Table]:
    """Every table of the report in reading order, the per-node breakdown last; absent
    analyses are left out."""
    tables = [contender_table(report), comparison_table(report)]
    if not report.ablation.axes.empty:
        tables += [axis_table(report), level_table(report), *interaction_tables(report)]
    tables.append(cost_table(report))
    extra = [attention_table(report), edge_type_table(report), arrival_table(report)]
    extra.append(homophily_table(report))
    extra.append(homophily_map_table(report.homophily_map))
    return tables + [part for part in extra if part is not None] + breakdown_tables(report)


def frames(report: SuiteReport) -> dict[str, pd.DataFrame]:
    """The analysis DataFrames by file stem, for CSV (full precision, no formatting)."""
    out = {
        "contenders": report.contenders,
        "comparisons": with_reasons(report.comparisons, report.settings),
        "ablation_levels": report.ablation.levels,
        "ablation_axes": report.ablation.axes,
        "ablation_interactions": report.ablation.interactions,
        "cost": report.cost,
        "attention": report.attention,
        "edge_types": report.edge_types,
        "arrival": report.arrival,
        "homophily": report.homophily,
        "homophily_map": (
            report.homophily_map.table if report.homophily_map is not None else pd.DataFrame()
        ),
    }
    return {name: frame for name, frame in out.items() if not frame.empty} | breakdown_frames(
        report
    )
