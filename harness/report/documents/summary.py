"""What `show` and `run` print for each suite, as one Document per suite: the headline verdict,
the contenders' summary, the ablation by axis, attention diagnostics, new-node arrival, the
paired comparisons with their reasons and the per-node breakdown. Formatting only."""

from __future__ import annotations

import pandas as pd

from harness.analysis.axes import AblationView
from harness.analysis.suite_report import SuiteReport
from harness.formatting import (
    fixed,
    interval,
    metric_label,
    missing,
    percent,
    signed,
    signed_interval,
)
from harness.report.documents.breakdown import headline_table
from harness.report.documents.diagnostic_tables import arrival_table, edge_type_table
from harness.report.documents.document import Block, Document, Items, Table, table
from harness.report.documents.suite_tables import comparison_table
from harness.report.documents.wording import headline_sentence, notices, reasons, warning_line


def summary_table(summary: pd.DataFrame, title: str) -> Table:
    """Contender, metric mean ± std, t-interval, costs; the best mean marked `best`."""
    metric = metric_label(summary["metric"].iloc[0])
    level = percent(summary["confidence"].iloc[0])
    header = ["contender", "model", "seeds", f"test {metric}", f"{level} t-interval"]
    header += ["s/epoch", "params", "tensor MiB"]
    best = summary["mean"].idxmax()
    rows, marks = [], []
    for index, row in summary.iterrows():
        clipped = " clipped" if row.get("ci_clipped", False) else ""
        rows.append(
            [
                str(row["contender"]),
                str(row["model"]),
                str(row["seeds"]),
                f"{fixed(row['mean'])} ± {fixed(row['std'])}",
                interval(row["ci_low"], row["ci_high"]) + clipped,
                fixed(row["seconds_per_epoch"], 4),
                f"{row['params']:,}",
                fixed(row["peak_mb"], 2),
            ]
        )
        marks.append("best" if index == best else "")
    optional = ("params", "tensor MiB")
    return table("summary", title, header, rows, optional=optional, marks=marks)


def _share(value: float, chance: float) -> str:
    """A measured share with its uniform-attention value in brackets; "-" when not measured."""
    if missing(value):
        return "-"
    return f"{fixed(value)} ({fixed(chance)})"


def axis_level_table(
    levels: pd.DataFrame, attention: pd.DataFrame, metric: str, confidence: float = 0.95
) -> Table:
    """One row per axis level: its test metric, its effect, and its attention."""
    first = levels.iloc[0]
    level = percent(confidence)
    keyed = attention.set_index(["axis", "level"]) if not attention.empty else None
    rows = []
    for axis, group in levels.groupby("axis", sort=False):
        for index, row in enumerate(group.itertuples()):
            found = keyed is not None and (axis, row.level) in keyed.index
            diag = keyed.loc[(axis, row.level)] if found else None
            rows.append(
                [
                    str(axis) if index == 0 else "",
                    str(row.level),
                    str(row.runs),
                    f"{fixed(row.mean)} ({interval(row.t_low, row.t_high)})",
                    f"{signed(row.effect)} ({signed_interval(row.effect_low, row.effect_high)})",
                    fixed(diag["entropy_ratio"], 2) if found else "-",
                    _share(diag["same_label_share"], diag["neighbour_homophily"]) if found else "-",
                ]
            )
    header = ["axis", "level", "runs", f"test {metric_label(metric)} ({level} t-interval)"]
    header += [f"effect ({level} t-interval)", "entropy", "same label"]
    note = (
        "Effect: level mean minus the mean of the axis's levels, in points (0.01). Attention: "
        "mean over layers, heads and runs; uniform attention gives entropy 1 and the chance "
        "share in brackets."
    )
    title = f"Ablation of '{first['contender']}' by axis (suite {first['suite']})"
    return table("ablation_by_axis", title, header, rows, note, optional=("entropy", "same label"))


def attention_variants_table(attention: pd.DataFrame) -> Table:
    """Per variant: does its attention differ from neighbour averaging?"""
    unlabelled = all(missing(value) for value in attention["same_label_share"])
    rows = [
        [
            str(row.variant),
            str(row.runs),
            fixed(row.entropy_ratio),
            _share(row.self_share, row.uniform_self_share),
            _share(row.same_label_share, row.neighbour_homophily),
        ]
        for row in attention.itertuples()
    ]
    note = (
        "Entropy: relative to uniform attention over the same neighbourhood (1 = uniform). "
        "Shares: attention on the self-loop, and on same-label neighbours; in brackets what "
        "uniform attention would give."
        + (" Same label skipped: these runs used no node labels." if unlabelled else "")
    )
    title = "Attention diagnostics (mean over layers, heads and seeds)"
    header = ["contender", "runs", "entropy", "self share", "same label"]
    return table("attention_variants", title, header, rows, note)


def verdict_blocks(report: SuiteReport) -> list[Block]:
    """The paired comparisons, the reason for each verdict, the per-node breakdown."""
    blocks: list[Block] = []
    if not report.comparisons.empty:
        blocks.append(comparison_table(report))
    blocks.append(Items("Verdicts", tuple(reasons(report))))
    nodes = headline_table(report)
    return blocks + ([nodes] if nodes is not None else [])


def suite_view(
    suite: str, summary: pd.DataFrame, ablation: AblationView | None, report: SuiteReport | None
) -> Document:
    """One suite's part of `show` or `run`."""
    blocks: list[Block] = [summary_table(summary.reset_index(drop=True), f"Suite: {suite}")]
    if ablation is not None and not ablation.levels.empty:
        levels, by_level = ablation.levels, ablation.attention_levels
        for (name, contender), group in levels[levels["suite"] == suite].groupby(
            ["suite", "contender"], sort=False
        ):
            mine = by_level[(by_level["suite"] == name) & (by_level["contender"] == contender)]
            diagnostics = mine.drop(columns=["suite", "contender"])
            blocks.append(
                axis_level_table(group, diagnostics, ablation.metric, ablation.confidence)
            )
    if ablation is not None:
        variants = ablation.attention_variants
        if not variants.empty and (variants["suite"] == suite).any():
            blocks.append(attention_variants_table(variants[variants["suite"] == suite]))
    warnings = [
        warning_line(w) for row in summary.itertuples() for w in getattr(row, "warnings", ())
    ]
    if report is None:
        return Document(title=f"Suite: {suite}", notices=tuple(warnings), blocks=tuple(blocks))
    shown = [part for part in (edge_type_table(report), arrival_table(report)) if part is not None]
    blocks += shown + verdict_blocks(report)
    return Document(
        title=f"Suite: {suite}",
        headline=headline_sentence(report),
        notices=tuple(notices(report)),
        blocks=tuple(blocks),
        name=f"summary {suite}",
    )


def summary_documents(
    summary: pd.DataFrame, ablation: AblationView | None, reports: tuple[SuiteReport, ...]
) -> list[Document]:
    """One Document per suite of the summary, in its order."""
    by_suite = {report.suite: report for report in reports}
    return [
        suite_view(str(suite), group, ablation, by_suite.get(str(suite)))
        for suite, group in summary.groupby("suite", sort=False)
    ]
