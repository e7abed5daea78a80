"""Report plots as PNG bytes, drawn with matplotlib's Agg canvas (no display, no pyplot).

Drawing only: every plotted figure comes from a SuiteReport. Names from suite files are
drawn as plain text (`text.parse_math` off), so `$x$` stays `$x$`.
"""

from __future__ import annotations

import io
from collections.abc import Callable

import matplotlib
import numpy as np
from matplotlib.figure import Figure

from harness.analysis.suite_report import SuiteReport
from harness.formatting import missing, percent
from harness.report.documents.homophily_plots import homophily_plot, homophily_title, place_labels
from harness.report.documents.palette import (
    AXIS,
    BAND,
    CYCLE,
    GUIDE,
    INK,
    SERIES,
    SIDES,
    VERDICTS,
)
from harness.report.documents.suite_facts import report_metric

SIDE_COLOURS = SIDES
VERDICT_COLOURS = VERDICTS
MAX_PANELS = 12
STYLE = {
    "text.parse_math": False,
    "font.size": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
    **CYCLE,
}


def _png(figure: Figure) -> bytes:
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=110, bbox_inches="tight")
    return buffer.getvalue()


def _height(rows: int) -> float:
    return max(2.2, 0.45 * rows + 1.2)


def contender_plot(report: SuiteReport) -> Figure:
    """Each seed's test metric as a dot; the mean with its t-interval as a bar."""
    table = report.contenders
    figure = Figure(figsize=(7.5, _height(len(table))))
    axes = figure.subplots()
    for position, row in enumerate(table.itertuples()):
        seeds = report.runs.loc[report.runs["variant"] == row.variant, "test_metric"]
        colour = SIDE_COLOURS[row.side]
        axes.scatter(seeds, np.full(len(seeds), position), s=14, alpha=0.45, color=colour)
        if not missing(row.t_low):
            axes.plot([row.t_low, row.t_high], [position, position], color=colour, lw=2.5)
        axes.plot(row.mean, position, marker="D", color=colour, markersize=7)
    axes.set_yticks(range(len(table)), list(table["variant"]))
    axes.invert_yaxis()
    level = percent(report.settings.confidence)
    axes.set_xlabel(f"test {report_metric(report)} (dots: seeds; bar: {level} t-interval)")
    axes.set_title("Contenders")
    return figure


def difference_plot(report: SuiteReport) -> Figure:
    """Paired differences with t-intervals, coloured by verdict; band: ± minimum gain."""
    table = report.comparisons
    figure = Figure(figsize=(7.5, _height(len(table))))
    axes = figure.subplots()
    gain = report.settings.minimum_gain
    axes.axvspan(-gain, gain, color=BAND, zorder=0, label=f"± minimum gain ({gain:g})")
    axes.axvline(0, color=AXIS, lw=0.8)
    for position, row in enumerate(table.itertuples()):
        colour = VERDICT_COLOURS[row.verdict]
        if not missing(row.t_low):
            axes.plot([row.t_low, row.t_high], [position, position], color=colour, lw=2.5)
        axes.plot(row.mean_difference, position, "o", color=colour, label=row.verdict)
    labels = [f"{r.attention} − {r.baseline}" for r in table.itertuples()]
    axes.set_yticks(range(len(table)), labels)
    axes.invert_yaxis()
    handles, names = axes.get_legend_handles_labels()
    unique = dict(zip(names, handles, strict=True))
    axes.legend(unique.values(), unique.keys(), loc="best", fontsize=8, frameon=False)
    axes.set_xlabel(f"difference in {report_metric(report)} points (attention minus baseline)")
    axes.set_title("Paired differences on shared seeds")
    return figure


def ablation_plot(report: SuiteReport) -> Figure:
    """One panel per (contender, axis): level means with t-intervals."""
    levels = report.ablation.levels
    panels = list(levels.groupby(["contender", "axis"], sort=False))[:MAX_PANELS]
    columns = min(3, len(panels))
    rows = -(-len(panels) // columns)
    figure = Figure(figsize=(3.4 * columns, 2.8 * rows))
    grid = np.atleast_1d(figure.subplots(rows, columns, squeeze=False)).ravel()
    for axes, ((contender, axis), group) in zip(grid, panels, strict=False):
        x = np.arange(len(group))
        low = (group["mean"] - group["t_low"]).to_numpy()
        high = (group["t_high"] - group["mean"]).to_numpy()
        axes.errorbar(x, group["mean"], yerr=[low, high], fmt="o-", color=SERIES[0], capsize=3)
        axes.set_xticks(x, list(group["level"]))
        axes.set_xlabel(axis)
        axes.set_title(str(contender), fontsize=9)
        axes.set_ylabel(f"test {report_metric(report)}")
    for axes in grid[len(panels) :]:
        axes.set_visible(False)
    figure.suptitle("Ablation axes: level means with t-intervals")
    figure.tight_layout()
    return figure


def cost_plot(report: SuiteReport) -> Figure:
    """Metric against each cost; Pareto-optimal contenders filled and joined."""
    table = report.cost
    figure = Figure(figsize=(11, 3.6))
    panels = figure.subplots(1, 3)
    costs = (
        ("seconds_per_epoch", "pareto_seconds", "seconds per epoch"),
        ("params", "pareto_params", "parameters"),
        ("peak_mb", "pareto_memory", "peak tensor memory of a training step (MiB)"),
    )
    for axes, (column, mark, name) in zip(panels, costs, strict=True):
        for row in table.itertuples():
            optimal = getattr(row, mark)
            colour = SIDE_COLOURS[row.side]
            axes.scatter(
                getattr(row, column),
                row.mean,
                s=45,
                color=colour if optimal else "white",
                edgecolors=colour,
                zorder=3,
            )
        front = table[table[mark]].sort_values(column)
        axes.step(front[column], front["mean"], where="post", color=GUIDE, lw=1, zorder=1)
        axes.set_xlabel(name)
        axes.set_ylabel(f"mean test {report_metric(report)}")
        axes.autoscale_view()
        points = list(zip(table[column], table["mean"], strict=True))
        place_labels(axes, points, list(table["variant"]))
    figure.suptitle("Cost trade-off (filled: Pareto-optimal)")
    figure.tight_layout()
    return figure


def attention_plot(report: SuiteReport) -> Figure:
    """Per attention variant: entropy ratio, self share and same-label share, each against
    what uniform attention over the same neighbourhoods would give."""
    table = report.attention
    figure = Figure(figsize=(11, _height(len(table))))
    panels = figure.subplots(1, 3, sharey=True)
    y = np.arange(len(table))
    pairs = (
        ("entropy_ratio", None, "entropy / uniform (1 = uniform)"),
        ("self_share", "uniform_self_share", "self share"),
        ("same_label_share", "neighbour_homophily", "same-label share"),
    )
    for axes, (measure, chance, title) in zip(panels, pairs, strict=True):
        axes.barh(y, table[measure].fillna(0), color=SIDES["attention"], label="attention")
        if chance is None:
            axes.axvline(1.0, color=AXIS, lw=1, ls="--", label="uniform")
        else:
            axes.scatter(table[chance], y, marker="|", s=300, color=INK, label="uniform")
        axes.set_title(title, fontsize=9)
        axes.set_xlim(0, 1.05)
    panels[0].set_yticks(y, list(table["variant"]))
    panels[0].invert_yaxis()
    panels[-1].legend(loc="lower right", fontsize=8, frameon=False)
    figure.suptitle("Attention diagnostics (mean over layers, heads and seeds)")
    figure.tight_layout()
    return figure


def breakdown_plot(report: SuiteReport) -> Figure:
    """The headline comparison per node group, one panel per grouping, lowest group left."""
    nodes = report.breakdown
    rows = nodes.headline_rows()
    panels = list(rows.groupby("grouping", sort=True))
    figure = Figure(figsize=(5.2 * len(panels), 3.4))
    grid = np.atleast_1d(figure.subplots(1, len(panels), squeeze=False)).ravel()
    gain = report.settings.minimum_gain
    for axes, (grouping, group) in zip(grid, panels, strict=True):
        axes.axhspan(-gain, gain, color=BAND, zorder=0)
        axes.axhline(0, color=AXIS, lw=0.8)
        for position, row in enumerate(group.itertuples()):
            colour = VERDICT_COLOURS[row.verdict]
            if not missing(row.low):
                axes.plot([position, position], [row.low, row.high], color=colour, lw=2.5)
            axes.plot(position, row.difference, "o", color=colour, label=row.verdict)
        axes.set_xticks(range(len(group)), list(group["group"]), rotation=30, ha="right")
        axes.set_xlabel(grouping.replace("_", " "))
        axes.set_ylabel(f"{report_metric(report)} points")
        handles, names = axes.get_legend_handles_labels()
        unique = dict(zip(names, handles, strict=True))
        axes.legend(unique.values(), unique.keys(), loc="best", fontsize=7, frameon=False)
    figure.suptitle(f"{nodes.attention} minus {nodes.baseline} by {nodes.unit} group (t-intervals)")
    figure.tight_layout()
    return figure


def _present(report: SuiteReport) -> dict[str, Callable[[SuiteReport], Figure]]:
    plots: dict[str, Callable[[SuiteReport], Figure]] = {"contenders": contender_plot}
    if not report.comparisons.empty:
        plots["differences"] = difference_plot
    if not report.ablation.levels.empty:
        plots["ablation"] = ablation_plot
    plots["cost"] = cost_plot
    if not report.attention.empty:
        plots["attention"] = attention_plot
    if report.homophily_map is not None or not report.homophily.empty or not report.attention.empty:
        plots["homophily"] = homophily_plot
    if report.breakdown is not None and report.breakdown.attention is not None:
        plots["breakdown"] = breakdown_plot
    return plots


PLOT_TITLES = {
    "contenders": "Contenders with intervals",
    "differences": "Paired differences",
    "ablation": "Ablation axes",
    "cost": "Cost trade-off",
    "attention": "Attention diagnostics",
    "homophily": "Homophily of the graph and of attention",
}


def plot_title(name: str, report: SuiteReport) -> str:
    """A plot's caption, named for what it shows in this report."""
    if name == "breakdown":
        return f"Headline comparison by {report.breakdown.unit} group"
    return homophily_title(report) if name == "homophily" else PLOT_TITLES[name]


def figures(report: SuiteReport) -> dict[str, bytes]:
    """PNG bytes of every plot the report's data supports, by name; absent data, no plot."""
    with matplotlib.rc_context(STYLE):
        return {name: _png(draw(report)) for name, draw in _present(report).items()}
