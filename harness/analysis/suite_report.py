"""The whole analysis of one suite's stored runs (SuiteReport), the type every renderer reads;
and loading a suite's current runs from the store."""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import pandas as pd
from torch_geometric.data import Data

from harness.analysis.ablation_effects import AblationEffects, ablation_effects
from harness.analysis.arrival import arrival_summary
from harness.analysis.breakdown import Breakdown, breakdown
from harness.analysis.cost import cost_tradeoff
from harness.analysis.edge_type_attention import edge_type_attention
from harness.analysis.stats import (
    RecordedWarning,
    describe,
    paired_comparisons,
    run_warnings,
    with_variants,
)
from harness.analysis.verdict import Headline, best_pair, headline, judge_all
from harness.data import load_graph
from harness.errors import InputError
from harness.results import NodePredictions
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis
from harness.schema.suite import Suite
from harness.schema.tasks import TASKS, task_kind
from harness.storage import store
from harness.storage.predictions import load_predictions
from harness.storage.selection import spec_runs
from harness.storage.suite_runs import SuiteRuns

if TYPE_CHECKING:
    from harness.analysis.homophily_map import HomophilyMapSummary


@dataclass(frozen=True)
class Incomplete:
    """What of a suite is not stored yet: runs stored of those it expands to, contenders with
    no run, and the seeds each other contender lacks."""

    stored: int
    expected: int
    absent: tuple[str, ...]
    lacking: tuple[tuple[str, tuple[int, ...]], ...]


@dataclass(frozen=True)
class SuiteReport:
    """Every analysis of one suite; what the report writers render."""

    suite: str
    metric: str
    settings: Analysis
    runs: pd.DataFrame
    contenders: pd.DataFrame
    comparisons: pd.DataFrame
    headline: Headline  # the best attention variant against the best baseline
    ablation: AblationEffects
    cost: pd.DataFrame
    attention: pd.DataFrame  # harness.analysis.axes.attention_by_variant; empty without diagnostics
    homophily: pd.DataFrame  # graph homophily of the stored dataset profile; may be empty
    arrival: pd.DataFrame  # analysis.arrival.arrival_summary; empty unless runs are inductive
    homophily_map: HomophilyMapSummary | None = None  # stored homophily-map runs, if any
    breakdown: Breakdown | None = None  # per node group; needs stored predictions and the data
    # said before everything else: runs of the suite not stored yet, warnings recorded in runs
    incomplete: Incomplete | None = None
    warnings: tuple[RecordedWarning, ...] = ()
    # attention share per edge type against edge share (edge_type_attention); may be empty
    edge_types: pd.DataFrame = field(default_factory=pd.DataFrame)


def stored_runs(chosen: SuiteRuns) -> pd.DataFrame:
    """Stored runs of a suite (a suite file's current runs, or a stored suite name), or all.

    For a suite file only runs whose key the file still expands to are kept, so runs of an
    edited suite's old settings do not mix in.
    """
    if chosen.file is None:
        return store.load_runs(chosen.store, chosen.names)
    from harness.planning import expand

    suite = chosen.file.suite
    if suite.tuning is not None:  # the seeded repeats of the tuned settings
        from harness.tuning.study import current_tuned_runs

        frame = store.load_runs(chosen.store, [suite.name])
        return current_tuned_runs(frame, suite).reset_index(drop=True)
    return spec_runs(chosen.store, expand(suite), same_contender=False)


def contenders(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """Per suite and variant: test metric over seeds with t and bootstrap intervals, costs."""
    return describe(runs, settings)


def comparisons(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """Paired comparisons (attention minus baseline, metric points) with verdicts."""
    return judge_all(paired_comparisons(runs, settings), settings)


def ablation(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> AblationEffects:
    """Level means, axis effects (ranked) and interactions of the varied axes."""
    return ablation_effects(runs, settings.confidence)


def cost(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> pd.DataFrame:
    """Metric against seconds per epoch, parameters and peak memory, with Pareto marks."""
    return cost_tradeoff(describe(runs, settings))


def graph_homophily(store_path: str | Path, suite: str) -> pd.DataFrame:
    """Homophily measures of the suite's latest stored dataset profile (measure, value)."""
    from harness.storage.profiles import load_profiles

    profiles = load_profiles(store_path, suite)
    if not profiles or not profiles[-1].labelled:  # no data, or a task that reads no labels
        return pd.DataFrame(columns=["measure", "value"])
    measures = asdict(profiles[-1].homophily)
    return pd.DataFrame({"measure": list(measures), "value": list(measures.values())})


def stored_homophily_map(store_path: str | Path, suite: Suite) -> HomophilyMapSummary | None:
    """The suite's homophily map (analysis.homophily_map) from stored runs and profile, if run."""
    from harness.analysis.homophily_map import summarise_map
    from harness.planning import map_suite_name
    from harness.storage.profiles import load_profiles

    profiles = load_profiles(store_path, suite.name)
    mapped = store.load_runs(store_path, [map_suite_name(suite)])
    if mapped.empty or not profiles:
        return None
    latest = with_variants(mapped)  # a map rerun with other settings counts once per seed
    return summarise_map(latest, profiles[-1], suite.metric)


def analyse(
    runs: pd.DataFrame,
    settings: Analysis = DEFAULT_ANALYSIS,
    homophily: pd.DataFrame | None = None,
    homophily_map: HomophilyMapSummary | None = None,
    predictions: dict[str, NodePredictions] | None = None,
    data: Data | None = None,
    missing: Incomplete | None = None,
) -> SuiteReport:
    """Every analysis of the runs of one suite; the graph's homophily measures and homophily
    map come from the store (graph_homophily, stored_homophily_map) when known, and the
    per-node breakdown needs the runs' stored predictions and the suite's input graph."""
    from harness.analysis.axes import attention_by_variant

    names = runs["suite"].unique()
    if len(names) != 1:
        raise InputError(
            f"analysis: given runs of {len(names)} suites; allowed: the runs of exactly one suite"
        )
    table = describe(runs, settings)
    judged = judge_all(paired_comparisons(runs, settings), settings)
    nodes = None
    if settings.breakdown and predictions and data is not None:
        best = best_pair(table)
        pair = None if best is None else (best[0]["variant"], best[1]["variant"])
        nodes = breakdown(with_variants(runs), predictions, data, settings, pair)
    return SuiteReport(
        suite=str(names[0]),
        metric=str(runs["metric"].iloc[0]),
        settings=settings,
        runs=with_variants(runs),
        contenders=table,
        comparisons=judged,
        headline=headline(table, judged),
        ablation=ablation_effects(runs, settings.confidence),
        cost=cost_tradeoff(table),
        attention=attention_by_variant(runs),
        homophily=homophily if homophily is not None else pd.DataFrame(columns=["measure"]),
        arrival=arrival_summary(runs, settings.confidence),
        homophily_map=homophily_map,
        breakdown=nodes,
        incomplete=missing,
        warnings=recorded_warnings(runs),
        edge_types=edge_type_attention(runs),
    )


def recorded_warnings(runs: pd.DataFrame) -> tuple[RecordedWarning, ...]:
    """Each warning recorded in the runs, per contender."""
    return tuple(
        warning
        for contender, group in runs.groupby("contender", sort=False)
        for warning in run_warnings(group, str(contender))
    )


def missing_runs(runs: pd.DataFrame, suite: Suite) -> Incomplete | None:
    """What of a suite is not stored yet; None when every run is stored."""
    from harness.planning import expand

    specs = expand(suite)
    stored = set(zip(runs["contender"], runs["key"], strict=True))
    missing = [spec for spec in specs if (spec.contender, spec.key) not in stored]
    if not missing or suite.tuning is not None:  # a tuned suite's runs follow its trials
        return None
    absent = [
        c for c in dict.fromkeys(s.contender for s in specs) if c not in set(runs["contender"])
    ]
    seeds: dict[str, set[int]] = {}
    for spec in missing:
        if spec.contender not in absent:
            seeds.setdefault(spec.contender, set()).add(spec.seed)
    lacking = tuple((contender, tuple(sorted(s))) for contender, s in seeds.items())
    return Incomplete(len(specs) - len(missing), len(specs), tuple(absent), lacking)


def analyse_store(chosen: SuiteRuns) -> SuiteReport:
    """Load a suite's stored runs and analyse them with the suite's settings.

    Given a suite file, its homophily map and per-node breakdown are included when their runs
    and predictions are stored.
    """
    loaded = stored_runs(chosen)
    if loaded.empty:
        raise InputError(f"{chosen.store}: no stored runs for suite '{chosen.given}'; run it first")
    name = str(loaded["suite"].iloc[0])
    mapped, predictions, data, missing = None, None, None, None
    if chosen.file is not None:
        source = chosen.file.suite
        mapped = stored_homophily_map(chosen.store, source)
        predictions = predictions_for(chosen.store, loaded, source.analysis)
        data = load_graph(source.data) if predictions else None
        missing = missing_runs(loaded, source)
    homophily = graph_homophily(chosen.store, name)
    return analyse(loaded, chosen.settings, homophily, mapped, predictions, data, missing)


def analyse_suite_runs(store_path: str | Path, runs: pd.DataFrame, suite: Suite) -> SuiteReport:
    """analyse() of a suite's runs, with the per-node breakdown when predictions are stored."""
    predictions = predictions_for(store_path, runs, suite.analysis)
    data = load_graph(suite.data) if predictions else None
    return analyse(runs, suite.analysis, predictions=predictions, data=data)


def predictions_for(store_path: str | Path, runs: pd.DataFrame, settings: Analysis) -> dict:
    """The runs' stored predictions, or none when the suite turned its breakdown off."""
    return load_predictions(store_path, runs["key"]) if settings.breakdown else {}


def node_breakdown(chosen: SuiteRuns) -> pd.DataFrame:
    """Per node group and comparison of a suite file's stored runs: the columns of
    csv/breakdown.csv, then seeds, p-values and verdicts."""
    given = chosen.given
    if chosen.file is None:
        raise InputError(f"{given}: suite file not found; the breakdown reads the suite's data")
    source = chosen.file.suite
    if not source.analysis.breakdown:
        raise InputError(
            f"{given}: analysis.breakdown: given false; the breakdown needs it true (the default), "
            "and runs stored with it true"
        )
    kind = task_kind(source.task)
    if not kind.breakdown:
        raise InputError(
            f"{given}: task: given '{source.task}'; the per-node breakdown groups scored test "
            f"nodes, which a {kind.title} suite has not; allowed: a suite whose task has them "
            f"({', '.join(name for name, task in TASKS.items() if task.breakdown)})"
        )
    report = analyse_store(chosen)
    if report.breakdown is None:
        raise InputError(f"{chosen.store}: no per-node predictions stored for suite '{given}'")
    return report.breakdown.comparisons


def analyse_each(runs: pd.DataFrame, settings: Analysis = DEFAULT_ANALYSIS) -> list[SuiteReport]:
    """One SuiteReport per suite among the runs, in stored order."""
    return [analyse(runs[runs["suite"] == name], settings) for name in runs["suite"].unique()]
