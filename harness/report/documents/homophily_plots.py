"""The homophily plot of a report: the homophily map, the graph's homophily measures and
attention against the graph, one panel each when its data is stored. Drawing only."""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from harness.analysis.suite_report import SuiteReport
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
    axes.axvline(summary.data_edge_homophily, color="#455a64", ls="--", lw=1)
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
    axes.barh(range(len(measures)), measures["value"], color="#2f6f9f")
    axes.set_yticks(range(len(measures)), [m.replace("_", " ") for m in measures["measure"]])
    axes.invert_yaxis()
    axes.axvline(0, color="#455a64", lw=0.8)
    axes.set_title("graph homophily (stored profile)", fontsize=9)


def _attention_panel(axes, report: SuiteReport) -> None:
    table = report.attention
    axes.plot([0, 1], [0, 1], color="#9e9e9e", lw=1, ls="--")
    axes.scatter(table["neighbour_homophily"], table["same_label_share"], color="#c2571a")
    for row in table.itertuples():
        axes.annotate(
            row.variant,
            (row.neighbour_homophily, row.same_label_share),
            fontsize=7,
            xytext=(4, 3),
            textcoords="offset points",
        )
    axes.set_xlim(0, 1)
    axes.set_ylim(0, 1)
    axes.set_xlabel("same-label share of neighbours (uniform attention)")
    axes.set_ylabel("same-label share of attention")
    axes.set_title("attention against the graph", fontsize=9)


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
    mapped = report.homophily_map is not None
    figure.suptitle("Homophily map" if mapped else "Homophily of the graph and of attention")
    figure.tight_layout()
    return figure
