"""The report's tables about the graph and the models' behaviour on it: attention
diagnostics, homophily, the homophily map and new-node arrival; each absent without data."""

from __future__ import annotations

from harness.analysis.arrival import DIFFERENCE_LIMIT
from harness.analysis.homophily_map import HomophilyMapSummary
from harness.analysis.suite_report import SuiteReport
from harness.formatting import fixed, interval, metric_label, percent
from harness.report.documents.document import Table, as_text, column_table, table


def attention_table(report: SuiteReport) -> Table | None:
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
        "Means over layers, heads and seeds. Entropy 1 is uniform attention; in brackets what "
        "uniform attention over the same neighbours would give."
    )
    return table("attention", "Attention diagnostics", header, rows, note)


def edge_type_table(report: SuiteReport) -> Table | None:
    """Share of attention per edge type against its share of edges, per layer and head."""
    frame = report.edge_types
    if frame.empty:
        return None
    rows = [
        [
            r.variant,
            f"{r.layer}/{r.head}",
            str(r.edge_type),
            f"{fixed(r.attention_share)} ({fixed(r.edge_share)})",
            "-" if r.ratio != r.ratio else f"{fixed(r.ratio, 2)}x",
        ]
        for r in frame.itertuples()
    ]
    header = ["contender", "layer/head", "edge type", "attention share (edge share)", "ratio"]
    note = (
        "Mean over nodes and seeds of the share of each node's attention on its edges of each "
        "type; in brackets the type's share of the node's edges, what uniform attention gives. "
        "Ratio above 1: attention favours that type (harness.training.edge_type_shares)."
    )
    return table("edge_types", "Attention per edge type", header, rows, note)


def homophily_table(report: SuiteReport) -> Table | None:
    if report.homophily.empty:
        return None
    rows = [[r.measure.replace("_", " "), fixed(r.value)] for r in report.homophily.itertuples()]
    note = "Of the suite's graph, from its stored dataset profile."
    return table("homophily", "Graph homophily", ["measure", "value"], rows, note)


def homophily_map_table(summary: HomophilyMapSummary | None) -> Table | None:
    """Each contender's mean test metric per edge homophily level of the matched synthetic
    graphs, and where the suite's data lies."""
    if summary is None:
        return None
    frame = summary.table
    contenders = list(dict.fromkeys(frame["contender"]))
    rows = []
    data = summary.data_edge_homophily
    for level, group in frame.groupby("level", sort=True):
        if data < level and not any(row[0].startswith("your data") for row in rows):
            rows.append([f"your data {data:.3f}"] + [""] * len(contenders))
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
    if not any(row[0].startswith("your data") for row in rows):
        rows.append([f"your data {data:.3f}"] + [""] * len(contenders))
    note = (
        f"Mean test {metric_label(summary.metric)} (t-interval) on synthetic graphs matched to the "
        f"suite's data; the data's edge homophily is {summary.data_edge_homophily:.3f}, "
        f"nearest level {summary.nearest_level:g}, where the best contender is "
        f"{summary.best_at_nearest}."
    )
    header = ["edge homophily", *contenders]
    return table("homophily_map", "Homophily map", header, rows, note)


def arrival_table(report: SuiteReport) -> Table | None:
    """New-node arrival of an inductive suite: update against full recompute, per variant."""
    if report.arrival.empty:
        return None
    level = percent(report.settings.confidence)
    columns = [as_text("contender", "variant"), as_text("seeds"), as_text("radius")]
    columns += [
        (
            "update ms/node",
            lambda r: f"{fixed(r.update_ms)} ({interval(r.update_low, r.update_high)})",
        ),
        (
            "full recompute ms/node",
            lambda r: f"{fixed(r.full_ms)} ({interval(r.full_low, r.full_high)})",
        ),
        ("speed-up", lambda r: f"{fixed(r.speed_up, 2)}x"),
        (
            "largest difference",
            lambda r: f"{r.max_difference:.1e}" + (" over limit" if r.difference_flagged else ""),
        ),
    ]
    note = (
        f"Milliseconds per node: mean with its {level} t-interval in brackets. "
        "Held-out nodes join the training graph in batches; after each, only outputs within the "
        "radius are recomputed (update) and checked against a full recompute. Speed-up: mean "
        f"full time over mean update time. A largest difference above {DIFFERENCE_LIMIT:g} "
        "means the update did not reproduce the full recompute."
    )
    return column_table("arrival", "New-node arrival", report.arrival, columns, note)
