"""The report's tables as rows of text, shared by the Markdown, LaTeX, HTML and terminal
renderers. Formatting only: every figure comes from a SuiteReport
(harness.analysis.suite_report)."""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from harness.analysis.arrival import DIFFERENCE_LIMIT
from harness.analysis.bounds import range_advice
from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, metric_label, p_text, signed, signed_interval


@dataclass(frozen=True)
class TextTable:
    """A titled table of plain (unescaped) text cells; `right` marks numeric columns."""

    name: str
    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    right: tuple[bool, ...]
    note: str = ""


def points(value: float) -> str:
    return f"{value:g} point" + ("" if value == 1 else "s")


def facts(report: SuiteReport) -> str:
    """One paragraph: what was measured and with which settings."""
    settings = report.settings
    return (
        f"Metric: test {report_metric(report)}; {report.runs['seed'].nunique()} seeds; minimum "
        f"gain that matters: {points(settings.minimum_gain)}; confidence "
        f"{settings.confidence:.0%}; {settings.bootstrap_resamples} bootstrap resamples. "
        "Figures are estimates on this data under these splits and seeds, not guarantees "
        "about other data."
    )


def report_metric(report: SuiteReport) -> str:
    return metric_label(report.metric)


def _table(name: str, title: str, header: list[str], rows: list[list[str]], note: str = ""):
    right = tuple(
        all(_numeric(row[i]) for row in rows) if rows else False for i in range(len(header))
    )
    return TextTable(name, title, tuple(header), tuple(tuple(r) for r in rows), right, note)


def _numeric(text: str) -> bool:
    stripped = text.replace(",", "").replace("±", " ").replace(" to ", " ").lstrip("<").split()
    try:
        return bool(stripped) and all(s == "-" or float(s) is not None for s in stripped)
    except ValueError:
        return False


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


def attention_table(report: SuiteReport) -> TextTable | None:
    if report.attention.empty:
        return None

    def pair(value: float, chance: float) -> str:
        return f"{fixed(value)} ({fixed(chance)})"

    rows = [
        [
            r.variant,
            str(r.runs),
            fixed(r.entropy_ratio),
            pair(r.self_share, r.uniform_self_share),
            pair(r.same_label_share, r.neighbour_homophily),
        ]
        for r in report.attention.itertuples()
    ]
    header = ["contender", "runs", "entropy / uniform", "self share (uniform)"]
    header.append("same label share (chance)")
    note = (
        "Means over layers, heads and seeds (harness.training.diagnostics). Entropy 1 is uniform "
        "attention; in brackets what uniform attention over the same neighbours would give."
    )
    return _table("attention", "Attention diagnostics", header, rows, note)


def homophily_table(report: SuiteReport) -> TextTable | None:
    if report.homophily.empty:
        return None
    rows = [[r.measure.replace("_", " "), fixed(r.value)] for r in report.homophily.itertuples()]
    note = "Of the suite's graph, from its stored dataset profile."
    return _table("homophily", "Graph homophily", ["measure", "value"], rows, note)


def homophily_map_table(report: SuiteReport) -> TextTable | None:
    summary = report.homophily_map
    if summary is None:
        return None
    frame = summary.table
    contenders = list(dict.fromkeys(frame["contender"]))
    rows = []
    for level, group in frame.groupby("level", sort=True):
        by_name = {r.contender: r for r in group.itertuples()}
        rows.append(
            [f"{level:g}"]
            + [
                f"{fixed(by_name[c].mean)} ({interval(by_name[c].low, by_name[c].high)})"
                if c in by_name
                else "-"
                for c in contenders
            ]
        )
    note = (
        f"Mean test {report_metric(report)} (t-interval) on synthetic graphs matched to the "
        f"suite's data; the data's edge homophily is {summary.data_edge_homophily:.3f}, "
        f"nearest level {summary.nearest_level:g}, where the best contender is "
        f"{summary.best_at_nearest}."
    )
    header = ["edge homophily", *contenders]
    return _table("homophily_map", "Homophily map", header, rows, note)


def arrival_table(report: SuiteReport) -> TextTable | None:
    """New-node arrival of an inductive suite: update against full recompute, per variant."""
    if report.arrival.empty:
        return None
    level = f"{report.settings.confidence:.0%}"
    rows = [
        [
            r.variant,
            str(r.seeds),
            str(r.radius),
            f"{fixed(r.update_ms)} ({interval(r.update_low, r.update_high)})",
            f"{fixed(r.full_ms)} ({interval(r.full_low, r.full_high)})",
            f"{fixed(r.speed_up, 2)}x",
            f"{r.max_difference:.1e}" + (" over limit" if r.difference_flagged else ""),
        ]
        for r in report.arrival.itertuples()
    ]
    header = ["contender", "seeds", "radius", f"update ms/node ({level} t)"]
    header += [f"full recompute ms/node ({level} t)", "speed-up", "largest difference"]
    note = (
        "Held-out nodes join the training graph in batches; after each, only outputs within the "
        "radius are recomputed (update) and checked against a full recompute. Speed-up: mean "
        f"full time over mean update time. A largest difference above {DIFFERENCE_LIMIT:g} "
        "means the update did not reproduce the full recompute."
    )
    return _table("arrival", "New-node arrival", header, rows, note)


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
