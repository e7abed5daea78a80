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
uses the defaults. A suite is given as a suite file or a stored suite name, resolved here once
(harness.storage.suite_runs) before any analysis sees it.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from harness.analysis import suite_report
from harness.analysis.suite_report import (
    SuiteReport,
    ablation,
    analyse,
    analyse_each,
    comparisons,
    contenders,
    cost,
    graph_homophily,
    stored_homophily_map,
)
from harness.report.documents.wording import headline_sentence as headline
from harness.report.documents.wording import with_reasons
from harness.schema.analysis import Analysis
from harness.storage.suite_runs import analysis_settings, named_suite, suite_runs


def runs(store_path: str | Path, suite: str | Path | None = None) -> pd.DataFrame:
    """Stored runs of a suite file (the runs it still expands to) or a stored suite name, or
    every stored run."""
    return suite_report.stored_runs(suite_runs(store_path, suite))


def settings_of(suite: str | Path | None) -> Analysis:
    """The `[analysis]` table of a suite file; the defaults for a stored suite name."""
    return analysis_settings(None if suite is None else named_suite(suite))


def analyse_store(store_path: str | Path, suite: str | Path) -> SuiteReport:
    """Every analysis of a suite's stored runs, with the suite's settings (a suite file adds its
    homophily map and per-node breakdown when stored)."""
    return suite_report.analyse_store(suite_runs(store_path, suite))


def breakdown(store_path: str | Path, suite: str | Path) -> pd.DataFrame:
    """Per node group and comparison of a suite file's stored runs (csv/breakdown.csv's
    columns, then seeds, p-values and verdicts)."""
    return suite_report.node_breakdown(suite_runs(store_path, suite))


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
