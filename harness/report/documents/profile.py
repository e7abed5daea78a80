"""A dataset profile as a Document: one row per property (formatting only; the figures come
computed by harness.data.profile)."""

from __future__ import annotations

from harness.data.profile import DatasetProfile
from harness.formatting import missing
from harness.report.documents.document import Document, Text, table


def profile_rows(profile: DatasetProfile) -> list[list[str]]:
    d, f, h = profile.degrees, profile.features, profile.homophily
    kind = "directed" if profile.directed else "undirected"
    labelled = sum(profile.class_counts)
    balance = ", ".join(
        f"{name} {count} ({count / labelled:.0%})"
        for name, count in zip(profile.class_names, profile.class_counts, strict=True)
    )
    removed = (profile.self_loops_removed, profile.duplicate_edges_removed)
    rows = [
        ["nodes", f"{profile.nodes}"],
        ["edges", f"{profile.edges} ({kind})"],
        [
            "degree",
            f"min {d.minimum}, median {d.median:g}, mean {d.mean:.2f}, "
            f"90th percentile {d.percentile_90:g}, max {d.maximum}",
        ],
        ["isolated nodes", f"{profile.isolated_nodes}"],
        ["removed on load", "{} self-loops, {} repeated edges".format(*removed)],
    ]
    graphs = profile.collection
    if graphs is not None:  # graph classification: the classes are those of the graphs
        rows[:0] = [
            [
                "graphs",
                f"{graphs.graphs}, of {graphs.nodes_minimum} to {graphs.nodes_maximum} nodes "
                f"(median {graphs.nodes_median:g})",
            ],
            ["graph classes", f"{len(profile.class_counts)}: {balance}"],
        ]
        if graphs.distinct_scaffolds is not None:
            rows.insert(2, ["scaffolds", f"{graphs.distinct_scaffolds} distinct (Bemis-Murcko)"])
        if graphs.skipped_rows:
            rows.insert(2, ["rows skipped", f"{graphs.skipped_rows} (invalid_rows = skip)"])
    if profile.labelled:
        rows.append(["classes", f"{len(profile.class_counts)}: {balance}"])
        rows.append(["unlabelled nodes", f"{profile.unlabelled_nodes}"])
    rows.append(
        [
            "features",
            f"{f.dimension} columns, mean {f.mean:.3g}, sd {f.standard_deviation:.3g}, "
            f"range {f.minimum:.3g} to {f.maximum:.3g}, {f.constant_columns} constant, "
            f"{f.zero_share:.0%} zeros",
        ]
    )
    if h is not None:
        rows.append(
            [
                "homophily",
                f"edge {h.edge:.3f}, node {h.node:.3f}, class-insensitive "
                f"{h.class_insensitive:.3f}, adjusted {h.adjusted:.3f}",
            ]
        )
    if profile.edge_attributes:
        rows.append(["edge attributes", ", ".join(profile.edge_attributes)])
    for name, (count, share) in profile.edge_type_homophily.items():
        measured = "no labelled edges" if share is None else f"edge homophily {share:.3f}"
        rows.append([f"edge type {name}", f"{count} edges, {measured}"])
    return rows


def profile_document(profile: DatasetProfile, notes: tuple[str, ...] = ()) -> Document:
    """The profile's properties, then the notes; its JSON data is the profile, with undefined
    homophily (one class) as null."""
    values = profile.as_dict()
    if values["homophily"] is not None:
        homophily = values["homophily"].items()
        values["homophily"] = {k: (None if missing(v) else v) for k, v in homophily}
    part = table("profile", "", ["", ""], profile_rows(profile), right=(False, False))
    blocks = (part, *(Text(f"note: {note}") for note in notes))
    return Document(title="Dataset profile", blocks=blocks, data=values, name="profile")
