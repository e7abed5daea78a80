"""The report's tables as rows of text, shared by the Markdown, LaTeX, HTML and terminal
renderers: contenders, comparisons and cost here, the rest in ablation_tables and
diagnostic_tables. Formatting only: every figure comes from a SuiteReport
(harness.analysis.suite_report)."""

from __future__ import annotations

import pandas as pd

from harness.analysis.bounds import range_advice
from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, p_text, signed, signed_interval
from harness.report.ablation_tables import axis_table, interaction_tables, level_table
from harness.report.diagnostic_tables import (
    arrival_table,
    attention_table,
    homophily_map_table,
    homophily_table,
)
from harness.report.text_table import TextTable, _table, points, report_metric


def contender_table(report: SuiteReport) -> TextTable:
    level = f"{report.settings.confidence:.0%}"
    rows = [
        [
            r.variant,
            r.model,
            r.side,
            str(r.seeds),
            f"{fixed(r.mean)} ± {fixed(r.std)}",
            fixed(r.median),
            f"{fixed(r.min)} to {fixed(r.max)}",
            interval(r.t_low, r.t_high),
            interval(r.bootstrap_low, r.bootstrap_high),
        ]
        for r in report.contenders.itertuples()
    ]
    header = ["contender", "model", "side", "seeds", f"test {report_metric(report)} mean ± std"]
    header += ["median", "min to max", f"{level} t-interval", f"{level} bootstrap"]
    return _table("contenders", "Contenders over seeds", header, rows)


def comparison_table(report: SuiteReport) -> TextTable:
    level = f"{report.settings.confidence:.0%}"
    rows = [
        [
            r.attention,
            r.baseline,
            str(r.seeds),
            signed(r.mean_difference, 2),
            signed_interval(r.t_low, r.t_high),
            signed_interval(r.bootstrap_low, r.bootstrap_high),
            f"{fixed(r.t_statistic, 2)} ({r.df})",
            p_text(r.p_t),
            p_text(r.p_t_holm),
            p_text(r.p_wilcoxon),
            fixed(r.effect_size, 2),
            r.verdict,
        ]
        for r in report.comparisons.itertuples()
    ]
    header = ["attention", "baseline", "seeds", "difference (points)", f"{level} t-interval"]
    header += [f"{level} bootstrap", "t (df)", "p", "Holm p", "Wilcoxon p", "d_z", "verdict"]
    note = (
        f"Differences are attention minus baseline in {report_metric(report)} points on shared "
        f"seeds; minimum gain that matters: {points(report.settings.minimum_gain)}; Holm's "
        "adjustment runs over all comparisons of the suite."
    )
    return _table("comparisons", "Paired comparisons", header, rows, note)


def reasons(report: SuiteReport) -> list[str]:
    """One line per comparison: the verdict and why; then one per t-interval shown clipped."""
    return [
        f"{r.attention} vs {r.baseline}: {r.verdict} ({r.reason})"
        for r in report.comparisons.itertuples()
    ] + range_notes(report)


def range_notes(report: SuiteReport) -> list[str]:
    """Each t-interval that passed the metric's possible range (analysis.bounds)."""
    level = f"{report.settings.confidence:.0%}"
    notes = []
    for r in report.contenders.itertuples():
        if r.t_clipped:
            notes.append(
                f"{r.variant}: the {level} t-interval of its mean passes the possible range 0 to "
                f"1 and is shown clipped; {range_advice(r.seeds, _count(r.seeds_for_range))}"
            )
    for r in report.comparisons.itertuples():
        if r.t_clipped:
            notes.append(
                f"{r.attention} vs {r.baseline}: the {level} t-interval of the difference passes "
                f"the possible ±100 points and is shown clipped; "
                f"{range_advice(r.seeds, _count(r.seeds_for_range))}"
            )
    return notes


def _count(value: object) -> int | None:
    return None if value is None or pd.isna(value) else int(value)


def cost_table(report: SuiteReport) -> TextTable:
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
    header += ["peak MB", "Pareto (all)", "Pareto (time)", "Pareto (params)", "Pareto (memory)"]
    note = "Pareto: no other contender is at least as good and at least as cheap."
    return _table("cost", "Cost trade-off", header, rows, note)


def all_tables(report: SuiteReport) -> list[TextTable]:
    """The report's tables in reading order; absent analyses are left out."""
    tables = [contender_table(report), comparison_table(report)]
    if not report.ablation.axes.empty:
        tables += [axis_table(report), level_table(report), *interaction_tables(report)]
    tables.append(cost_table(report))
    extra = [attention_table(report), arrival_table(report), homophily_table(report)]
    extra.append(homophily_map_table(report))
    return tables + [part for part in extra if part is not None]


def frames(report: SuiteReport) -> dict[str, pd.DataFrame]:
    """The analysis DataFrames by file stem, for CSV (full precision, no formatting)."""
    out = {
        "contenders": report.contenders,
        "comparisons": report.comparisons,
        "ablation_levels": report.ablation.levels,
        "ablation_axes": report.ablation.axes,
        "ablation_interactions": report.ablation.interactions,
        "cost": report.cost,
        "attention": report.attention,
        "arrival": report.arrival,
        "homophily": report.homophily,
        "homophily_map": (
            report.homophily_map.table if report.homophily_map is not None else pd.DataFrame()
        ),
    }
    return {name: frame for name, frame in out.items() if not frame.empty}
