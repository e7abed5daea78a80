"""Python API: the analyses of stored runs as pandas DataFrames, for notebooks.

    from harness import api
    runs = api.runs("runs/heedful.db", "suites/demo.toml")
    api.contenders(runs)         # per variant: mean, std, median, min, max, intervals, costs
    api.comparisons(runs)        # paired tests with Holm adjustment and verdicts
    api.ablation(runs).axes      # axes ranked by effect
    api.cost(runs)               # metric against costs, Pareto marks
    report = api.analyse(runs)   # everything at once, one suite
    api.headline(report)         # the headline comparison in one sentence
    api.with_reasons(api.comparisons(runs))  # each verdict with its reason in words
    api.breakdown("runs/heedful.db", "suites/demo.toml")  # per node group and comparison

Every function takes an optional `settings` (the suite's `[analysis]` table) and otherwise
uses the defaults.
"""

from harness.analysis.suite_report import (
    SuiteReport,
    ablation,
    analyse,
    analyse_each,
    analyse_store,
    comparisons,
    contenders,
    cost,
    graph_homophily,
    runs,
    settings_of,
    stored_homophily_map,
)
from harness.analysis.suite_report import node_breakdown as breakdown
from harness.report.documents.wording import headline_sentence as headline
from harness.report.documents.wording import with_reasons

__all__ = [
    "SuiteReport",
    "runs",
    "settings_of",
    "contenders",
    "comparisons",
    "ablation",
    "cost",
    "graph_homophily",
    "stored_homophily_map",
    "analyse",
    "analyse_store",
    "analyse_each",
    "breakdown",
    "headline",
    "with_reasons",
]
