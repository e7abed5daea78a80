"""The homophily plot of a report: the homophily map, the graph's homophily measures and
attention against the graph, one panel each when its data is stored. Drawing only."""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from harness.analysis.suite_report import SuiteReport
from harness.report.documents.palette import AXIS, GUIDE, SIDES
from harness.report.documents.suite_facts import report_metric


def _map_panel(axes, report: SuiteReport) -> None:
    """Each contender's metric across edge homophily; a line where the suite's data lies."""
    summary = report.homophily_map
    for contender, group in summary.table.groupby("contender", sort=False):
        group = group.sort_values("level")
        line = axes.plot(group["level"], group["mean"], marker="o", label=contender)[0]
        axes.fill_between(
            group["level"], group["low"], group["high"], alpha=0.15, color=line.get_color()
        )
    axes.axvline(summary.data_edge_homophily, color=AXIS, ls="--", lw=1)
    axes.annotate(
        "your data",
        (summary.data_edge_homophily, 1.0),
        xycoords=("data", "axes fraction"),
        fontsize=7,
        xytext=(3, -10),
        textcoords="offset points",
    )
    axes.set_xlabel("edge homophily of matched synthetic graphs")
    axes.set_ylabel(f"test {report_metric(report)}")
    axes.legend(fontsize=7, frameon=False)
    axes.set_title("contenders across homophily", fontsize=9)


def _graph_panel(axes, report: SuiteReport) -> None:
    measures = report.homophily
    axes.barh(range(len(measures)), measures["value"], color=SIDES["baseline"])
    axes.set_yticks(range(len(measures)), [m.replace("_", " ") for m in measures["measure"]])
    axes.invert_yaxis()
    axes.axvline(0, color=AXIS, lw=0.8)
    axes.set_title("graph homophily (stored profile)", fontsize=9)


def _attention_panel(axes, report: SuiteReport) -> None:
    table = report.attention
    axes.plot([0, 1], [0, 1], color=GUIDE, lw=1, ls="--")
    axes.scatter(table["neighbour_homophily"], table["same_label_share"], color=SIDES["attention"])
    axes.set_xlim(0, 1)
    axes.set_ylim(0, 1)
    points = zip(table["neighbour_homophily"], table["same_label_share"], strict=True)
    place_labels(axes, list(points), list(table["variant"]))
    axes.set_xlabel("same-label share of neighbours (uniform attention)")
    axes.set_ylabel("same-label share of attention")
    axes.set_title("attention against the graph", fontsize=9)


def homophily_title(report: SuiteReport) -> str:
    """What the homophily plot shows, named by its panels: the homophily map only when the
    suite ran one."""
    shown = ["homophily map"] if report.homophily_map is not None else []
    shown += ["graph homophily"] if not report.homophily.empty else []
    shown += ["attention against the graph"] if not report.attention.empty else []
    text = ", ".join(shown[:-1]) + (" and " if len(shown) > 1 else "") + shown[-1]
    return text[0].upper() + text[1:]


def place_labels(axes, points: list[tuple[float, float]], names: list[str]) -> None:
    """Each point's name beside it; a name that would overlap one already placed moves down a
    line (measured in points, from where the axes draw each point)."""
    size, placed = 7.0, []
    scale = 72.0 / axes.figure.dpi  # display pixels to typographic points
    order = sorted(range(len(names)), key=lambda i: (-points[i][1], points[i][0]))
    for i in order:
        x, y = (value * scale for value in axes.transData.transform(points[i]))
        width, offset = 0.6 * size * len(str(names[i])), 3.0
        while any(
            abs(x - other_x) < max(width, other_width) and abs(y + offset - other_y) < size + 1
            for other_x, other_y, other_width in placed
        ):
            offset -= size + 1
        placed.append((x, y + offset, width))
        axes.annotate(
            names[i],
            points[i],
            fontsize=size,
            xytext=(4, offset),
            textcoords="offset points",
        )


def homophily_plot(report: SuiteReport) -> Figure:
    """The homophily map (contenders on matched synthetic graphs across edge homophily), the
    graph's homophily measures, and each attention variant's same-label share against the
    share of same-label neighbours (above the diagonal: attention prefers them); each panel
    only when its data is stored."""
    panels = [
        draw
        for draw, present in (
            (_map_panel, report.homophily_map is not None),
            (_graph_panel, not report.homophily.empty),
            (_attention_panel, not report.attention.empty),
        )
        if present
    ]
    figure = Figure(figsize=(4.8 * len(panels), 3.9))
    for axes, draw in zip(np.atleast_1d(figure.subplots(1, len(panels))), panels, strict=True):
        draw(axes, report)
    figure.suptitle(homophily_title(report))
    figure.tight_layout()
    return figure
