"""Terminal rendering of a dataset profile (formatting only; the figures come computed)."""

from __future__ import annotations

import json

from rich.console import Console
from rich.markup import escape
from rich.table import Table

from harness.data.profile import DatasetProfile


def print_profile(profile: DatasetProfile, console: Console, notes: tuple[str, ...] = ()) -> None:
    table = Table(show_header=False, box=None, pad_edge=False)
    table.add_column(style="bold")
    table.add_column()
    d, f, h = profile.degrees, profile.features, profile.homophily
    kind = "directed" if profile.directed else "undirected"
    table.add_row("nodes", f"{profile.nodes}")
    table.add_row("edges", f"{profile.edges} ({kind})")
    table.add_row(
        "degree",
        f"min {d.minimum}, median {d.median:g}, mean {d.mean:.2f}, "
        f"90th percentile {d.percentile_90:g}, max {d.maximum}",
    )
    table.add_row("isolated nodes", f"{profile.isolated_nodes}")
    removed = (profile.self_loops_removed, profile.duplicate_edges_removed)
    table.add_row("removed on load", "{} self-loops, {} repeated edges".format(*removed))
    labelled = sum(profile.class_counts)
    balance = ", ".join(
        f"{escape(str(name))} {count} ({count / labelled:.0%})"
        for name, count in zip(profile.class_names, profile.class_counts, strict=True)
    )
    if profile.labelled:
        table.add_row("classes", f"{len(profile.class_counts)}: {balance}")
        table.add_row("unlabelled nodes", f"{profile.unlabelled_nodes}")
    table.add_row(
        "features",
        f"{f.dimension} columns, mean {f.mean:.3g}, sd {f.standard_deviation:.3g}, "
        f"range [{f.minimum:.3g}, {f.maximum:.3g}], {f.constant_columns} constant, "
        f"{f.zero_share:.0%} zeros",
    )
    if h is not None:
        table.add_row(
            "homophily",
            f"edge {h.edge:.3f}, node {h.node:.3f}, class-insensitive "
            f"{h.class_insensitive:.3f}, adjusted {h.adjusted:.3f}",
        )
    console.print(table)
    for note in notes:
        console.print(f"note: {note}", markup=False, highlight=False)


def profile_json(profile: DatasetProfile) -> str:
    """The profile as JSON; undefined homophily (one class) is written as null."""
    values = profile.as_dict()
    if values["homophily"] is not None:
        homophily = values["homophily"].items()
        values["homophily"] = {k: (None if v != v else v) for k, v in homophily}
    return json.dumps(values, indent=2)
